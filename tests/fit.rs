//! Fit against hand-built libraries, each part exercising one check (issue 4), and the
//! ranking's invariants as properties.

use loadfit::fit::{self, CheckVerdict, Role, SortKey, Verdict};
use loadfit::library::Library;
use loadfit::needs;
use loadfit::stage::Stage;
use std::path::Path;

fn fixture(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/fit")
        .join(name)
}

fn run(stage: &str, parts: &str) -> (Stage, needs::Needs, Library, fit::Fit) {
    let stage = Stage::read(&fixture(stage)).unwrap();
    let library = Library::load(&[fixture(parts)]).unwrap();
    assert!(library.rejected.is_empty(), "{:?}", library.rejected);
    let needs = needs::compute(&stage, Some(&library));
    let fit = fit::evaluate(&stage, &needs, &library, SortKey::Score);
    (stage, needs, library, fit)
}

fn verdict_of(library: &Library, fit: &fit::Fit, role: Role, part: &str) -> fit::Candidate {
    fit.role(role)
        .unwrap()
        .candidates
        .iter()
        .find(|c| &*library.parts[c.part].number == part)
        .unwrap_or_else(|| panic!("{part} not a candidate"))
        .clone()
}

#[test]
fn five_percent_short_is_near_twenty_is_short_missing_is_unknown() {
    let (_, needs, library, fit) = run("resistive-npn.toml", "switch-parts.csv");
    // 12 V / 0.8 (voltage derating) = 15 V: a 14.25 V VCEO is 5 % short, 12 V is 20 % short.
    assert_eq!(needs.value("switch.voltage"), Some(15.0));
    assert_eq!(
        verdict_of(&library, &fit, Role::Switch, "FXN-OK").verdict,
        Verdict::Fits
    );
    let near = verdict_of(&library, &fit, Role::Switch, "FXN-NEAR");
    assert_eq!(near.verdict, Verdict::Near);
    let short_check = near
        .checks
        .iter()
        .find(|c| c.verdict == CheckVerdict::Short)
        .unwrap();
    assert_eq!(short_check.need, "switch.voltage");
    assert!((short_check.shortfall().unwrap() - 0.05).abs() < 1e-9);
    assert_eq!(
        verdict_of(&library, &fit, Role::Switch, "FXN-SHORT").verdict,
        Verdict::Short
    );
    let gap = verdict_of(&library, &fit, Role::Switch, "FXN-GAP");
    assert_eq!(gap.verdict, Verdict::Unknown);
    assert!(
        gap.checks
            .iter()
            .any(|c| c.need == "switch.gain" && c.verdict == CheckVerdict::Unknown)
    );
    let old = verdict_of(&library, &fit, Role::Switch, "FXN-OLD");
    assert!(
        old.checks
            .iter()
            .any(|c| c.need == "part.status" && c.verdict == CheckVerdict::Short)
    );
    // Only NPNs are candidates for an npn switch; the order is fits, near, unknown, short.
    let role = fit.role(Role::Switch).unwrap();
    assert_eq!(role.candidates.len(), 5);
    let order: Vec<&str> = role
        .candidates
        .iter()
        .map(|c| &*library.parts[c.part].number)
        .collect();
    // Within the short group the obsolete part scores lower (status −30).
    assert_eq!(
        order,
        ["FXN-OK", "FXN-NEAR", "FXN-GAP", "FXN-SHORT", "FXN-OLD"]
    );
    assert!(fit.every_role_fits());
}

#[test]
fn rds_on_given_only_at_10_v_is_short_on_gate_drive_for_3v3() {
    let (_, _, library, fit) = run("resistive-nmos.toml", "switch-parts.csv");
    let standard = verdict_of(&library, &fit, Role::Switch, "FXM-10V");
    let gate = standard
        .checks
        .iter()
        .find(|c| c.need == "switch.gate_drive")
        .unwrap();
    assert_eq!(gate.verdict, CheckVerdict::Short);
    assert_eq!(standard.verdict, Verdict::Short);
    assert_eq!(
        verdict_of(&library, &fit, Role::Switch, "FXM-LOGIC").verdict,
        Verdict::Fits
    );
}

#[test]
fn relay_with_1500_v_rms_is_short_on_dielectric_for_reinforced_mains() {
    // IEC 60950-1 table 5B (from memory): working peak 325 V, reinforced: 3000 V rms.
    let (_, needs, library, fit) = run("relay-mains.toml", "relay-parts.csv");
    assert_eq!(needs.value("relay.dielectric"), Some(3000.0));
    // IEC 60664-1 table F.1: 230 V in the 300 V row, category II 2500 V; reinforced one step up.
    assert_eq!(needs.value("relay.impulse"), Some(4000.0));
    let basic = verdict_of(&library, &fit, Role::Relay, "FXK-BASIC");
    let dielectric = basic
        .checks
        .iter()
        .find(|c| c.need == "relay.dielectric")
        .unwrap();
    assert_eq!(dielectric.verdict, CheckVerdict::Short);
    assert_eq!(
        verdict_of(&library, &fit, Role::Relay, "FXK-REINF").verdict,
        Verdict::Fits
    );
    assert!(
        needs
            .problems
            .iter()
            .any(|p| p.severity == needs::Severity::Caution)
    );
}

#[test]
fn demo_stages_fit_against_the_demo_library() {
    let library = Library::demo();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("data/stages");
    let mut seen = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        let stage = Stage::read(&path).unwrap();
        let needs = needs::compute(&stage, Some(&library));
        let fit = fit::evaluate(&stage, &needs, &library, SortKey::Score);
        for role in &fit.roles {
            assert!(
                role.fits() > 0,
                "{}: no fit for {}",
                path.display(),
                role.role.name()
            );
            for c in &role.candidates {
                if c.verdict == Verdict::Fits {
                    assert!(c.checks.iter().all(|k| k.verdict == CheckVerdict::Pass));
                }
            }
        }
        seen += 1;
    }
    assert!(seen >= 5);
}

mod properties {
    use super::*;
    use proptest::prelude::*;

    fn library_of(rows: &[(f64, f64, f64, u64, f64)]) -> Library {
        let mut text = String::from("part,kind,vceo,ic_max,hfe_min,stock,price,pd\n");
        for (i, (vceo, ic, hfe, stock, price)) in rows.iter().enumerate() {
            text.push_str(&format!(
                "P{i:03},npn,{vceo},{ic},{hfe},{stock},{price},0.5\n"
            ));
        }
        let mut library = Library::new();
        library.add_bytes("p.csv", text.as_bytes()).unwrap();
        library
    }

    fn row() -> impl Strategy<Value = (f64, f64, f64, u64, f64)> {
        (
            5.0f64..60.0,
            0.01f64..2.0,
            5.0f64..300.0,
            0u64..50,
            0.01f64..3.0,
        )
    }

    proptest! {
        /// No `fits` part violates any need, and the ranking is total and stable.
        #[test]
        fn fits_meet_every_need_and_order_is_total(rows in proptest::collection::vec(row(), 1..30), sort in 0usize..5) {
            let stage = Stage::read(&fixture("resistive-npn.toml")).unwrap();
            let library = library_of(&rows);
            let needs = needs::compute(&stage, Some(&library));
            let key = SortKey::ALL[sort];
            let fit = fit::evaluate(&stage, &needs, &library, key);
            let role = fit.role(Role::Switch).unwrap();
            for c in &role.candidates {
                let part = library.parts[c.part].bjt().unwrap();
                if c.verdict == Verdict::Fits {
                    prop_assert!(part.vceo.get().unwrap() >= needs.value("switch.voltage").unwrap() - 1e-9);
                    prop_assert!(part.ic_max.get().unwrap() >= needs.value("switch.current").unwrap() - 1e-9);
                    prop_assert!(part.hfe_min.get().unwrap() >= needs.value("switch.gain").unwrap() - 1e-9);
                }
            }
            for pair in role.candidates.windows(2) {
                prop_assert!(fit::rank::compare(&library, &pair[0], &pair[1], key) != std::cmp::Ordering::Greater);
            }
            let again = fit::evaluate(&stage, &needs, &library, key);
            prop_assert_eq!(&fit, &again);
        }

        /// Adding a part never changes the relative order of the others.
        #[test]
        fn adding_a_part_keeps_the_others_in_order(rows in proptest::collection::vec(row(), 2..25), extra in row(), sort in 0usize..5) {
            let stage = Stage::read(&fixture("resistive-npn.toml")).unwrap();
            let key = SortKey::ALL[sort];
            let order = |rows: &[(f64, f64, f64, u64, f64)]| {
                let library = library_of(rows);
                let needs = needs::compute(&stage, Some(&library));
                let fit = fit::evaluate(&stage, &needs, &library, key);
                fit.role(Role::Switch).unwrap().candidates.iter()
                    .map(|c| library.parts[c.part].number.to_string()).collect::<Vec<_>>()
            };
            let before = order(&rows);
            let mut more = rows.clone();
            more.push(extra);
            let added = format!("P{:03}", rows.len());
            let after: Vec<String> = order(&more).into_iter().filter(|p| *p != added).collect();
            prop_assert_eq!(before, after);
        }
    }
}

/// A large library (evaluated on all cores) keeps checks for its first places only; every
/// other candidate's verdict, headroom and score are those of the full evaluation, and every
/// part that can fill the role is there once.
#[test]
fn large_libraries_rank_without_holding_every_check() {
    let library = loadfit::synthetic::library(60_000, 3).unwrap();
    assert!(library.parts.len() > fit::FULL_DETAIL_PARTS);
    let stage = Stage::read(&fixture("resistive-npn.toml")).unwrap();
    let needs = needs::compute(&stage, Some(&library));
    let result = fit::evaluate(&stage, &needs, &library, SortKey::Score);
    let role = result.role(Role::Switch).unwrap();
    assert!(role.candidates.len() > fit::DETAIL_RANKS);
    assert!(
        role.candidates[..fit::DETAIL_RANKS]
            .iter()
            .all(|c| !c.checks.is_empty())
    );
    assert!(
        role.candidates[fit::DETAIL_RANKS..]
            .iter()
            .all(|c| c.checks.is_empty())
    );
    for c in role.candidates.iter().step_by(97) {
        let full = fit::evaluate_part(&stage, &needs, &library, Role::Switch, c.part).unwrap();
        assert_eq!(
            (full.verdict, full.headroom, full.score),
            (c.verdict, c.headroom, c.score)
        );
        let filled = fit::with_checks(&stage, &needs, &library, Role::Switch, c);
        assert_eq!(filled.checks, full.checks);
        assert_eq!(filled.rank, c.rank);
    }
    assert!(role.needs.contains(&"switch.voltage"));
    let mut held: Vec<usize> = role.candidates.iter().map(|c| c.part).collect();
    held.sort_unstable();
    let can: Vec<usize> = (0..library.parts.len())
        .filter(|&i| fit::evaluate_part(&stage, &needs, &library, Role::Switch, i).is_some())
        .collect();
    assert_eq!(held, can);
}

/// A large library lists the needs its role's parts are held against as a full evaluation
/// would, even where the first places are all of one kind (door strike: NPNs and N-MOSFETs,
/// and only the MOSFETs are held against the gate needs).
#[test]
fn large_libraries_list_every_need_their_parts_are_held_against() {
    let library = loadfit::synthetic::library(30_000, 11).unwrap();
    assert!(library.parts.len() > fit::FULL_DETAIL_PARTS);
    let stage = Stage::read(std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/data/stages/door-strike.toml"
    )))
    .unwrap();
    let needs = needs::compute(&stage, Some(&library));
    // By part number the first places are all of the kind whose numbers sort first.
    let result = fit::evaluate(&stage, &needs, &library, SortKey::Part);
    let switch = result.role(Role::Switch).unwrap();
    let first_kind = library.parts[switch.candidates[0].part].kind;
    assert!(
        switch.candidates[..fit::DETAIL_RANKS]
            .iter()
            .all(|c| library.parts[c.part].kind == first_kind),
        "the first places are of one kind"
    );
    for role in &result.roles {
        let mut seen: Vec<&str> = Vec::new();
        for i in 0..library.parts.len() {
            if let Some(c) = fit::evaluate_part(&stage, &needs, &library, role.role, i) {
                for k in c.checks.iter() {
                    if !seen.contains(&k.need) {
                        seen.push(k.need);
                    }
                }
            }
        }
        let expected: Vec<&str> = needs
            .needs
            .iter()
            .map(|n| n.id)
            .filter(|id| seen.contains(id))
            .collect();
        assert_eq!(role.needs, expected, "{:?}", role.role);
    }
    let switch = result.role(Role::Switch).unwrap();
    assert!(
        switch.needs.contains(&"switch.gate_drive"),
        "{:?}",
        switch.needs
    );
}
