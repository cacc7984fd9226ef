//! Evaluation and ranking over generated libraries of 100 000 and 1 000 000 parts.
//! `cargo bench --bench fit`. Issue target: an edit's needs + evaluation + ranking under
//! 100 ms at 1 000 000 parts. The search is measured by `cargo bench --bench workbench`.

use loadfit::fit::{self, SortKey};
use loadfit::library::Library;
use loadfit::needs;
use loadfit::stage::Stage;

fn main() {
    divan::main();
}

const STAGE: &str = include_str!("../data/stages/door-strike.toml");

fn library(rows: u64) -> Library {
    loadfit::synthetic::library(rows, 1).expect("a generated library reads")
}

/// An edit in the workbench: the needs again, every part evaluated, every role ranked, in
/// the memory the workbench keeps across edits (the fit before is given back to it, as the
/// workbench gives back the fit an edit replaces).
#[divan::bench(args = [100_000, 1_000_000], sample_count = 30)]
fn needs_evaluate_rank(bencher: divan::Bencher, rows: u64) {
    let library = library(rows);
    let stage = Stage::from_toml(STAGE, "door-strike.toml").expect("the demo stage reads");
    let mut spare = fit::Spare::default();
    bencher.bench_local(|| {
        let needs = needs::compute(&stage, Some(&library));
        let fit = fit::evaluate_with(&stage, &needs, &library, SortKey::Score, &mut spare);
        let roles = fit.roles.len();
        spare.keep(fit);
        divan::black_box(roles)
    });
}

/// The same in new memory each time, as `loadfit fit` evaluates once.
#[divan::bench(args = [100_000, 1_000_000], sample_count = 30)]
fn needs_evaluate_rank_new_memory(bencher: divan::Bencher, rows: u64) {
    let library = library(rows);
    let stage = Stage::from_toml(STAGE, "door-strike.toml").expect("the demo stage reads");
    bencher.bench(|| {
        let needs = needs::compute(&stage, Some(&library));
        let fit = fit::evaluate(&stage, &needs, &library, SortKey::Score);
        divan::black_box(fit.roles.len())
    });
}

#[divan::bench(args = [100_000, 1_000_000], sample_count = 10)]
fn rank_only(bencher: divan::Bencher, rows: u64) {
    let library = library(rows);
    let stage = Stage::from_toml(STAGE, "door-strike.toml").expect("the demo stage reads");
    let needs = needs::compute(&stage, Some(&library));
    let fit = fit::evaluate(&stage, &needs, &library, SortKey::Score);
    let candidates = fit.roles[0].candidates.clone();
    bencher.bench(|| {
        let mut again = candidates.clone();
        fit::rank::rank(&mut again, &library, SortKey::Price);
        divan::black_box(again.len())
    });
}
