//! `loadfit lint` and `loadfit init` end to end: run the binary, parse its JSON back.

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

fn demo() -> String {
    format!("{}/data/demo-parts.csv", env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn the_demo_library_lints_clean_with_every_row_loaded() {
    let (code, out, err) = loadfit(&["lint", &demo(), "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let doc: serde_json::Value = serde_json::from_str(&out).expect("JSON");
    assert_eq!(doc["rows"], doc["loaded"]);
    assert!(doc["rows"].as_u64().unwrap() >= 80);
    assert_eq!(doc["rejected"].as_array().unwrap().len(), 0);
    assert_eq!(
        doc["warnings"].as_array().unwrap().len(),
        0,
        "{}",
        doc["warnings"]
    );
    for kind in [
        "npn",
        "pnp",
        "nmos",
        "pmos",
        "diode",
        "schottky",
        "zener",
        "relay",
        "photocell",
    ] {
        assert!(
            doc["kinds"][kind].as_u64().unwrap_or(0) > 0,
            "no {kind} in the demo"
        );
    }
}

#[test]
fn rejected_rows_exit_1_and_are_listed() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("parts.csv");
    std::fs::write(&path, "part,kind,vceo\nQ1,npn,40 V\nQ2,npn,4O V\n").unwrap();
    let (code, out, _) = loadfit(&["lint", path.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(
        out.contains("parts.csv:3: vceo: \"4O V\" is not a number"),
        "{out}"
    );
    let (code, out, _) = loadfit(&["lint", path.to_str().unwrap(), "--format", "json"]);
    assert_eq!(code, 1);
    let doc: serde_json::Value = serde_json::from_str(&out).unwrap();
    let rejected = &doc["rejected"][0];
    assert_eq!(rejected["line"], 3);
    assert_eq!(rejected["column"], "vceo");
    assert_eq!(rejected["text"], "4O V");
}

#[test]
fn unreadable_input_exits_2_with_one_line() {
    let (code, _, err) = loadfit(&["lint", "no/such/file.csv", "--format", "json"]);
    assert_eq!(code, 2);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("no/such/file.csv"));
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("x.csv");
    std::fs::write(&path, "name,kind\nQ1,npn\n").unwrap();
    let (code, _, err) = loadfit(&["lint", path.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(err.contains("no `part` column"), "{err}");
}

#[test]
fn init_writes_a_library_that_lints_and_refuses_to_overwrite() {
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("bench");
    let (code, out, err) = loadfit(&["init", target.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("parts.csv"));
    let parts = target.join("parts.csv");
    let (code, out, _) = loadfit(&["lint", parts.to_str().unwrap(), "--format", "json"]);
    assert_eq!(code, 0);
    let doc: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(doc["loaded"], 3);
    std::fs::write(target.join("stage.toml"), "# mine\n").unwrap();
    let before = std::fs::read(&parts).unwrap();
    let (code, _, err) = loadfit(&["init", target.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(err.contains("already exists"), "{err}");
    assert_eq!(std::fs::read(&parts).unwrap(), before);
    assert_eq!(
        std::fs::read_to_string(target.join("stage.toml")).unwrap(),
        "# mine\n"
    );
}

#[test]
fn a_closed_pipe_is_not_an_error() {
    use std::io::Read;
    // Enough rejected rows that the JSON is far larger than a pipe's buffer.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("big.csv");
    let mut text = String::from("part,kind,vceo\n");
    for i in 0..5000 {
        text.push_str(&format!("Q{i},npn,4O V\n"));
    }
    std::fs::write(&path, text).unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_loadfit"))
        .args(["lint", path.to_str().unwrap(), "--format", "json"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Read a few bytes and close the pipe.
    let mut first = [0u8; 4];
    let mut stdout = child.stdout.take().unwrap();
    stdout.read_exact(&mut first).unwrap();
    drop(stdout);
    let status = child.wait().unwrap();
    let mut err = String::new();
    child
        .stderr
        .take()
        .unwrap()
        .read_to_string(&mut err)
        .unwrap();
    // Exit 1 is lint's answer for rejected rows; a pipe error would be 2 or a signal.
    assert_eq!(status.code(), Some(1), "{status:?} {err}");
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn no_arguments_summarises_the_demo() {
    let (code, out, _) = loadfit(&[]);
    assert_eq!(code, 0);
    assert!(out.contains("built in"), "{out}");
}
