//! The library has no terminal I/O: nothing outside `src/tui/` and `src/main.rs` names
//! ratatui or crossterm (DESIGN.md section 2).

use std::path::Path;

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap().flatten() {
        let path = entry.path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn the_library_does_not_use_terminal_crates() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    assert!(files.len() > 5);
    for file in files {
        let relative = file.strip_prefix(&src).unwrap();
        let shell = relative.starts_with("tui")
            || relative == Path::new("tui.rs")
            || relative == Path::new("main.rs");
        if shell {
            continue;
        }
        let text = std::fs::read_to_string(&file).unwrap();
        for crate_name in ["ratatui", "crossterm"] {
            assert!(
                !text.contains(crate_name),
                "{} mentions {crate_name}: terminal code belongs in src/tui/",
                relative.display()
            );
        }
    }
}

#[test]
fn the_readme_lists_every_library_column() {
    let readme =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md")).unwrap();
    for spec in loadfit::library::columns::FIELDS {
        assert!(
            readme.contains(&format!("| `{}` |", spec.name)),
            "README.md does not list the column `{}`",
            spec.name
        );
    }
}
