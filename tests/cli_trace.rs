//! `loadfit trace` end to end: every example stage in every format, a candidate part, the
//! exit codes, and `--out` (atomic, never over an input, the format from the extension).

use std::path::{Path, PathBuf};
use std::process::Command;

fn loadfit(args: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_loadfit"))
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("the binary runs: {e}"));
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

fn stage(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("data/stages")
        .join(name)
        .display()
        .to_string()
}

fn stages() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages");
    let mut stages: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap_or_else(|e| panic!("{e}"))
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    stages.sort();
    assert!(stages.len() >= 5);
    stages
}

#[test]
fn every_example_stage_traces_in_every_format() {
    for path in stages() {
        let path = path.display().to_string();
        let (code, out, err) = loadfit(&["trace", &path, "--format", "json"]);
        assert_eq!(code, 0, "{path}: {err}");
        let doc: serde_json::Value =
            serde_json::from_str(&out).unwrap_or_else(|e| panic!("{path}: {e}"));
        let points = doc["points"].as_array().map_or(0, Vec::len);
        assert!(points > 100 && points <= 4000, "{path}: {points} points");
        assert!(doc["peak_voltage"].as_f64().is_some(), "{path}");
        let (code, out, _) = loadfit(&["trace", &path, "--format", "csv"]);
        assert_eq!(code, 0);
        assert!(out.starts_with("time_s,voltage_V,current_A"), "{path}");
        let (code, out, _) = loadfit(&["trace", &path, "--format", "svg"]);
        assert_eq!(code, 0);
        assert!(
            out.contains("<svg") && out.trim_end().ends_with("</svg>"),
            "{path}"
        );
        let (code, out, _) = loadfit(&["trace", &path]);
        assert_eq!(code, 0);
        assert!(out.contains("peak voltage"), "{path}: {out}");
    }
}

#[test]
fn a_candidate_over_its_rating_exits_1() {
    // The valve's zener clamp holds the drain near 51 V; a 40 V MOSFET of the demo library
    // breaks down, a 100 V one does not.
    let valve = stage("irrigation-valve.toml");
    let (code, out, _) = loadfit(&["trace", &valve, "--part", "OSN1840L", "--format", "json"]);
    assert_eq!(code, 1, "{out}");
    let doc: serde_json::Value = serde_json::from_str(&out).unwrap_or_default();
    assert_eq!(doc["rating"]["name"], "VDS");
    assert_eq!(doc["role"], "switch");
    let (code, _, err) = loadfit(&["trace", &valve, "--part", "OSN2410D"]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn unusable_parts_exit_2() {
    let valve = stage("irrigation-valve.toml");
    let (code, _, err) = loadfit(&["trace", &valve, "--part", "NO-SUCH-PART-0000"]);
    assert_eq!(code, 2);
    assert!(err.contains("not in the library"), "{err}");
    // A photocell fills no role of a valve stage.
    let (code, _, err) = loadfit(&["trace", &valve, "--part", "SNR-2007"]);
    assert_eq!(code, 2, "{err}");
    let (code, _, _) = loadfit(&["trace", "no/such/stage.toml"]);
    assert_eq!(code, 2);
}

#[test]
fn out_writes_atomically_and_never_over_an_input() {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let valve = stage("irrigation-valve.toml");
    let svg = dir.path().join("valve.svg");
    let svg_s = svg.display().to_string();
    let (code, out, err) = loadfit(&["trace", &valve, "--out", &svg_s]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("wrote"), "{out}");
    let text = std::fs::read_to_string(&svg).unwrap_or_default();
    assert!(text.starts_with("<svg"));
    // Once written, it is kept unless --force.
    let (code, _, err) = loadfit(&["trace", &valve, "--out", &svg_s]);
    assert_eq!(code, 2, "{err}");
    let (code, _, _) = loadfit(&["trace", &valve, "--out", &svg_s, "--force"]);
    assert_eq!(code, 0);
    // The stage file itself is refused, even with --force.
    let copy = dir.path().join("stage.toml");
    std::fs::copy(&valve, &copy).unwrap_or_else(|e| panic!("{e}"));
    let before = std::fs::read(&copy).unwrap_or_default();
    let copy_s = copy.display().to_string();
    let (code, _, err) = loadfit(&[
        "trace", &copy_s, "--out", &copy_s, "--format", "json", "--force",
    ]);
    assert_eq!(code, 2, "{err}");
    assert_eq!(std::fs::read(&copy).unwrap_or_default(), before);
    // An extension that names no format needs --format.
    let other = dir.path().join("valve.dat").display().to_string();
    let (code, _, err) = loadfit(&["trace", &valve, "--out", &other]);
    assert_eq!(code, 2, "{err}");
}
