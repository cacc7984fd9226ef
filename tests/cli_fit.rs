//! `loadfit needs`, `fit` and `shortlist` end to end on the demo library and every example
//! stage: run the binary, parse its output back.

use std::path::{Path, PathBuf};
use std::process::Command;

fn loadfit(args: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_loadfit"))
        .args(args)
        .output()
        .expect("the binary runs");
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

fn stages() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages");
    let mut stages: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    stages.sort();
    assert!(stages.len() >= 5);
    stages
}

#[test]
fn fit_json_on_every_example_stage() {
    let order = ["fits", "near", "unknown", "short"];
    for stage in stages() {
        let (code, out, err) = loadfit(&["fit", stage.to_str().unwrap(), "--format", "json"]);
        assert_eq!(
            code,
            0,
            "{}: every role should have a fit in the demo: {err}",
            stage.display()
        );
        let doc: serde_json::Value = serde_json::from_str(&out).unwrap();
        let roles = doc["roles"].as_array().unwrap();
        assert!(!roles.is_empty());
        for role in roles {
            let candidates = role["candidates"].as_array().unwrap();
            let groups: Vec<usize> = candidates
                .iter()
                .map(|c| order.iter().position(|v| *v == c["verdict"]).unwrap())
                .collect();
            assert!(
                groups.windows(2).all(|w| w[0] <= w[1]),
                "{}: order",
                stage.display()
            );
            for (i, c) in candidates.iter().enumerate() {
                assert_eq!(c["rank"], i + 1);
                for check in c["checks"].as_array().unwrap() {
                    if c["verdict"] == "fits" {
                        assert_eq!(check["verdict"], "pass");
                    }
                }
            }
        }
    }
}

#[test]
fn needs_json_on_every_example_stage() {
    for stage in stages() {
        let (code, out, err) = loadfit(&["needs", stage.to_str().unwrap(), "--format", "json"]);
        assert!(code == 0 || code == 1, "{err}");
        let doc: serde_json::Value = serde_json::from_str(&out).unwrap();
        let errors = doc["problems"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|p| p["severity"] == "error")
            .count();
        assert_eq!(code, i32::from(errors > 0));
        assert!(
            doc["needs"]
                .as_array()
                .unwrap()
                .iter()
                .any(|n| n["id"] == "switch.voltage")
        );
    }
}

#[test]
fn fit_text_names_the_failing_check_and_role_filter_works() {
    let stage = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages/mains-pump-relay.toml");
    let (code, out, _) = loadfit(&[
        "fit",
        stage.to_str().unwrap(),
        "--role",
        "relay",
        "--limit",
        "50",
    ]);
    assert_eq!(code, 0);
    assert!(
        out.contains("relay —") && !out.contains("switch —"),
        "{out}"
    );
    assert!(out.contains("short"), "{out}");
    let (code, _, err) = loadfit(&["fit", stage.to_str().unwrap(), "--role", "sensor"]);
    assert_eq!(code, 2);
    assert!(err.contains("no `sensor` role"), "{err}");
    let (code, out, _) = loadfit(&["fit", stage.to_str().unwrap(), "--format", "csv"]);
    assert_eq!(code, 0);
    let mut reader = csv::Reader::from_reader(out.as_bytes());
    assert!(reader.records().count() > 10);
}

#[test]
fn unreadable_stage_exits_2() {
    let (code, _, err) = loadfit(&["fit", "no/such/stage.toml"]);
    assert_eq!(code, 2);
    assert_eq!(err.lines().count(), 1, "{err}");
}

#[test]
fn shortlist_writes_every_format_and_refuses_library_files() {
    let dir = tempfile::tempdir().unwrap();
    let stage = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages/mains-pump-relay.toml");
    let stage = stage.to_str().unwrap();
    for ext in ["csv", "md", "json"] {
        let out = dir.path().join(format!("picks.{ext}"));
        let (code, stdout, err) = loadfit(&["shortlist", stage, "--out", out.to_str().unwrap()]);
        assert_eq!(code, 0, "{err}");
        assert!(stdout.contains("wrote"));
        let text = std::fs::read_to_string(&out).unwrap();
        match ext {
            "json" => {
                let doc: serde_json::Value = serde_json::from_str(&text).unwrap();
                let roles = doc["roles"].as_array().unwrap();
                assert_eq!(roles.len(), 3);
                assert!(
                    roles
                        .iter()
                        .all(|r| (1..=3).contains(&r["parts"].as_array().unwrap().len()))
                );
            }
            "md" => {
                assert!(
                    text.contains("## Picks and alternates") && text.contains("Caution"),
                    "{text}"
                );
                assert!(text.contains("relay.impulse"));
            }
            _ => {
                let mut reader = csv::ReaderBuilder::new()
                    .flexible(true)
                    .from_reader(text.as_bytes());
                assert!(
                    reader
                        .records()
                        .filter_map(Result::ok)
                        .any(|r| &r[1] == "pick")
                );
            }
        }
        let (code, _, err) = loadfit(&["shortlist", stage, "--out", out.to_str().unwrap()]);
        assert_eq!(
            code, 2,
            "an existing file is not overwritten without --force"
        );
        assert!(err.contains("already exists"), "{err}");
    }
    // Never over a library file.
    let library = dir.path().join("lib.csv");
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("data/demo-parts.csv"),
        &library,
    )
    .unwrap();
    let before = std::fs::read(&library).unwrap();
    let (code, _, err) = loadfit(&[
        "shortlist",
        stage,
        "--parts",
        library.to_str().unwrap(),
        "--out",
        library.to_str().unwrap(),
        "--force",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("library file"), "{err}");
    assert_eq!(std::fs::read(&library).unwrap(), before);
}

/// OWASP, CSV injection: hostile cells from a library come out of every CSV writer
/// neutralised, and read back as text starting with a quote mark.
#[test]
fn hostile_cells_are_neutralised_in_csv_exports() {
    let dir = tempfile::tempdir().unwrap();
    let library = dir.path().join("hostile.csv");
    std::fs::write(
        &library,
        "part,kind,package,maker,vceo,ic_max,hfe_min,pd,stock,price\n\
         =HYPERLINK(\"http://x\"),npn,@SUM(A1),+cmd,60 V,1 A,200,1 W,100,0.1\n\
         QX-SAFE,npn,TO-92,-maker,60 V,1 A,200,1 W,100,0.1\n",
    )
    .unwrap();
    let stage = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/fit/resistive-npn.toml");
    let (_, out, _) = loadfit(&[
        "fit",
        stage.to_str().unwrap(),
        "--parts",
        library.to_str().unwrap(),
        "--format",
        "csv",
    ]);
    let export = dir.path().join("s.csv");
    loadfit(&[
        "shortlist",
        stage.to_str().unwrap(),
        "--parts",
        library.to_str().unwrap(),
        "--out",
        export.to_str().unwrap(),
    ]);
    let shortlist = std::fs::read_to_string(&export).unwrap();
    for text in [out, shortlist] {
        let mut reader = csv::ReaderBuilder::new()
            .flexible(true)
            .has_headers(false)
            .from_reader(text.as_bytes());
        for record in reader.records() {
            for cell in record.unwrap().iter() {
                let formula = cell.starts_with(['=', '+', '@'])
                    || (cell.starts_with('-') && cell.parse::<f64>().is_err());
                assert!(!formula, "unsafe cell {cell:?} in {text}");
            }
        }
        assert!(text.contains("'=HYPERLINK"), "{text}");
    }
}
