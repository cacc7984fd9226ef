//! Running ngspice (Debian package `ngspice`, batch mode) from a test: write a deck into a
//! fresh folder, run `ngspice -b`, read the waveform its `wrdata` writes. Shared by the test
//! crates that check loadfit against it (`ngspice_needs.rs`, `ngspice_trace.rs`), each
//! including this file with `#[path]`; each uses only some of it.
//!
//! Without ngspice a test says it skipped; with `CI=true` its absence is a failure instead, so
//! CI never passes without the reference having run.

#![allow(dead_code)]

use std::path::Path;
use std::process::Command;

/// Whether ngspice can be run; under `CI=true` its absence is a failure.
pub fn ngspice_available(test: &str) -> bool {
    match Command::new("ngspice").arg("--version").output() {
        Ok(out) if out.status.success() => true,
        _ => {
            let ci = std::env::var("CI").is_ok_and(|v| v.eq_ignore_ascii_case("true"));
            assert!(
                !ci,
                "{test}: ngspice is not installed, and CI=true requires it (apt-get install ngspice)"
            );
            println!("{test}: skipped, ngspice is not installed (apt-get install ngspice)");
            false
        }
    }
}

/// A waveform: time and one column per vector written by `wrdata`.
pub struct Wave {
    /// One row a time point: time, then the vectors in the order asked for.
    pub rows: Vec<Vec<f64>>,
}

impl Wave {
    /// Column `k` (0 is time) at the last sample at or before `t`.
    pub fn at(&self, t: f64, k: usize) -> f64 {
        self.rows
            .iter()
            .take_while(|r| r[0] <= t)
            .last()
            .map_or(f64::NAN, |r| r[k])
    }

    /// The first time at or after `from` where column `k` crosses `level` in the direction
    /// given, linearly interpolated between samples.
    pub fn crossing(&self, k: usize, level: f64, from: f64, rising: bool) -> f64 {
        let after: Vec<&Vec<f64>> = self.rows.iter().filter(|r| r[0] >= from).collect();
        for pair in after.windows(2) {
            let (a, b) = (pair[0], pair[1]);
            let crossed = if rising {
                a[k] < level && b[k] >= level
            } else {
                a[k] > level && b[k] <= level
            };
            if crossed {
                return a[0] + (level - a[k]) * (b[0] - a[0]) / (b[k] - a[k]);
            }
        }
        f64::NAN
    }

    /// The largest value of column `k` at or after `from`.
    pub fn max_after(&self, k: usize, from: f64) -> f64 {
        self.rows
            .iter()
            .filter(|r| r[0] >= from)
            .map(|r| r[k])
            .fold(f64::NEG_INFINITY, f64::max)
    }

    /// ∫ f(row) dt from `from` to the end, by the trapezoid rule over ngspice's time points.
    pub fn integral_after(&self, from: f64, f: impl Fn(&[f64]) -> f64) -> f64 {
        let after: Vec<&Vec<f64>> = self.rows.iter().filter(|r| r[0] >= from).collect();
        after
            .windows(2)
            .map(|w| 0.5 * (f(w[0]) + f(w[1])) * (w[1][0] - w[0][0]))
            .sum()
    }
}

/// Writes `deck` (with `wrdata out.txt <vectors>` in its control block) into a fresh folder,
/// runs `ngspice -b` there and reads the waveform.
pub fn simulate(deck: &str) -> Wave {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("temporary folder: {e}"));
    let path = dir.path().join("deck.cir");
    std::fs::write(&path, deck).unwrap_or_else(|e| panic!("write deck: {e}"));
    let out = Command::new("ngspice")
        .arg("-b")
        .arg("deck.cir")
        .current_dir(dir.path())
        .output()
        .unwrap_or_else(|e| panic!("run ngspice: {e}"));
    assert!(
        out.status.success(),
        "ngspice failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    read_wave(&dir.path().join("out.txt"))
}

/// Reads a `wrdata` file written with `wr_vecnames` and `wr_singlescale`.
pub fn read_wave(path: &Path) -> Wave {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("ngspice output: {e}"));
    let rows: Vec<Vec<f64>> = text
        .lines()
        .skip(1) // the header of vector names (wr_vecnames)
        .map(|l| {
            l.split_whitespace()
                .filter_map(|x| x.parse().ok())
                .collect::<Vec<f64>>()
        })
        .filter(|r| r.len() >= 2)
        .collect();
    assert!(rows.len() > 100, "too few samples: {}", rows.len());
    Wave { rows }
}

/// |a - b| / |b|.
pub fn relative(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// The control block every deck shares: one time column, vector names, 7 digits.
pub fn control(tran: &str, vectors: &str) -> String {
    format!(
        ".control\nset wr_singlescale\nset wr_vecnames\noption numdgt=7\ntran {tran}\nwrdata out.txt {vectors}\nquit\n.endc\n.end\n"
    )
}
