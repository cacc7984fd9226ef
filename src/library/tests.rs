//! Reading libraries: formats, encodings and every kind of bad input named in the issue.

use super::*;

fn load(text: &[u8]) -> Library {
    let mut library = Library::new();
    match library.add_bytes("test.csv", text) {
        Ok(()) => library,
        Err(e) => panic!("load failed: {e}"),
    }
}

fn bjt(library: &Library, number: &str) -> Bjt {
    *library
        .find(number)
        .and_then(Part::bjt)
        .unwrap_or_else(|| panic!("{number} is not a loaded BJT"))
}

const GOOD: &str = "part,kind,package,pinout,vceo,ic_max,hfe_min,vce_sat\n\
QX100,npn,TO-92,EBC,40 V,200 mA,100,0.2 V\n\
QX200,pnp,TO-92,EBC,40,0.2,100,0.25\n";

#[test]
fn demo_library_loads_every_row() {
    let library = Library::demo();
    assert!(library.rejected.is_empty(), "{:?}", library.rejected);
    assert_eq!(library.parts.len(), library.rows);
    assert!(!library.parts.is_empty());
}

#[test]
fn reads_units_and_bare_numbers() {
    let library = load(GOOD.as_bytes());
    assert_eq!(library.parts.len(), 2);
    let a = bjt(&library, "QX100");
    assert_eq!(a.vceo.get(), Some(40.0));
    assert_eq!(a.ic_max.get(), Some(0.2));
    assert_eq!(a.hfe_min.get(), Some(100.0));
    let b = bjt(&library, "qx200");
    assert_eq!(b.vce_sat.get(), Some(0.25));
    let part = library.find("QX100").unwrap();
    assert_eq!(library.text(part.package), "TO-92");
    assert_eq!(library.text(part.pinout), "EBC");
    assert_eq!(part.source.line, 2);
    assert_eq!(library.kind_counts(), vec![(Kind::Npn, 1), (Kind::Pnp, 1)]);
}

#[test]
fn semicolon_file_with_decimal_commas_matches_its_comma_twin() {
    let comma = "part,kind,Vceo (V),Ic (mA),hFE,VCE(sat) (V),Ptot (mW)\n\
                 QX1,npn,45,100,110,0.25,500\n\
                 QX2,npn,30,\"1.5\",220,0.3,625\n";
    let semicolon = "part;kind;Vceo (V);Ic (mA);hFE;VCE(sat) (V);Ptot (mW)\n\
                     QX1;npn;45;100;110;0,25;500\n\
                     QX2;npn;30;1,5;220;0,3;625\n";
    let a = load(comma.as_bytes());
    let b = load(semicolon.as_bytes());
    assert!(
        a.rejected.is_empty() && b.rejected.is_empty(),
        "{:?} {:?}",
        a.rejected,
        b.rejected
    );
    for number in ["QX1", "QX2"] {
        assert_eq!(bjt(&a, number), bjt(&b, number), "{number}");
    }
    let q = bjt(&a, "QX2");
    assert_eq!(q.ic_max.get(), Some(1.5e-3));
    assert!((q.pd.get().unwrap() - 0.625).abs() < 1e-12);
}

#[test]
fn header_aliases_and_units_scale_the_column() {
    let text = "Part Number,Type,BVceo,Ic max (mA),V_CEO\nQX1,NPN,50,300,60\n";
    let library = load(text.as_bytes());
    let q = bjt(&library, "QX1");
    assert_eq!(q.vceo.get(), Some(50.0), "the first vceo column is used");
    assert!((q.ic_max.get().unwrap() - 0.3).abs() < 1e-12);
    assert!(
        library
            .warnings
            .iter()
            .any(|w| w.message.contains("repeats `vceo`"))
    );
    assert_eq!(
        library.extra(library.find("QX1").unwrap(), "V_CEO"),
        Some("60")
    );
}

#[test]
fn a_cells_own_unit_wins_over_the_header() {
    let library = load(b"part,kind,Ic (mA)\nQX1,npn,1 A\nQX2,npn,250\n");
    assert_eq!(bjt(&library, "QX1").ic_max.get(), Some(1.0));
    assert_eq!(bjt(&library, "QX2").ic_max.get(), Some(0.25));
}

#[test]
fn header_unit_of_the_wrong_dimension_keeps_the_column_as_extra() {
    let library = load(b"part,kind,vceo (mA)\nQX1,npn,40\n");
    assert_eq!(bjt(&library, "QX1").vceo.get(), None);
    assert!(
        library
            .warnings
            .iter()
            .any(|w| w.line == 1 && w.message.contains("does not fit"))
    );
}

#[test]
fn bom_crlf_quotes_and_unknown_columns() {
    let text = "\u{feff}part,kind,notes,shelf\r\nQX1,npn,\"general purpose, fast\",B-12\r\nQX2,npn,\"say \"\"hi\"\"\",\r\n";
    let library = load(text.as_bytes());
    assert_eq!(library.parts.len(), 2, "{:?}", library.rejected);
    let q1 = library.find("QX1").unwrap();
    assert_eq!(&*q1.notes, "general purpose, fast");
    assert_eq!(library.extra(q1, "shelf"), Some("B-12"));
    assert_eq!(&*library.find("QX2").unwrap().notes, "say \"hi\"");
    assert_eq!(library.find("QX2").unwrap().source.line, 3);
}

#[test]
fn tab_delimited_is_detected() {
    let library = load(b"part\tkind\tvceo\nQX1\tnpn\t40 V\n");
    assert_eq!(bjt(&library, "QX1").vceo.get(), Some(40.0));
}

#[test]
fn windows_1252_text_is_decoded_with_a_warning() {
    let mut text = b"part,kind,notes,vrrm\nDX1,diode,".to_vec();
    text.extend_from_slice(&[0xB5, b'A', b' ', 0x96, b' ', b'f', b'a', b's', b't']);
    text.extend_from_slice(b",100 V\n");
    let library = load(&text);
    let part = library.find("DX1").unwrap();
    assert_eq!(&*part.notes, "µA – fast");
    assert!(
        library
            .warnings
            .iter()
            .any(|w| w.message.contains("Windows-1252") && w.line == 2)
    );
}

#[test]
fn utf16_text_is_decoded() {
    let text = "part,kind,vz\nZX1,zener,5V1\n";
    let mut bytes = vec![0xFF, 0xFE];
    for unit in text.encode_utf16() {
        bytes.extend_from_slice(&unit.to_le_bytes());
    }
    let library = load(&bytes);
    assert_eq!(
        library
            .find("ZX1")
            .and_then(Part::diode)
            .and_then(|d| d.vz.get()),
        Some(5.1)
    );
}

// ---- bad input: each case gives a clear message, no panic, and the rest still loads ----

#[test]
fn empty_file_is_an_error() {
    let mut library = Library::new();
    let error = library.add_bytes("empty.csv", b"").unwrap_err();
    assert!(matches!(error, LoadError::Empty { .. }));
    assert!(error.to_string().contains("empty.csv"));
    assert!(library.add_bytes("blank.csv", b"\n\n  \n").is_err());
}

#[test]
fn header_only_loads_nothing_with_a_warning() {
    let library = load(b"part,kind,vceo\n");
    assert!(library.parts.is_empty());
    assert!(
        library
            .warnings
            .iter()
            .any(|w| w.message.contains("no rows"))
    );
}

#[test]
fn missing_part_column_is_an_error_naming_it() {
    let mut library = Library::new();
    let error = library
        .add_bytes("x.csv", b"name,kind\nQX1,npn\n")
        .unwrap_err();
    let text = error.to_string();
    assert!(
        text.contains("no `part` column") && text.contains("name, kind"),
        "{text}"
    );
}

#[test]
fn ragged_rows_are_rejected_with_their_line() {
    let library = load(b"part,kind,vceo\nQX1,npn,40\nQX2,npn\nQX3,npn,40,extra\nQX4,npn,30\n");
    assert_eq!(library.parts.len(), 2);
    let lines: Vec<u32> = library.rejected.iter().map(|d| d.line).collect();
    assert_eq!(lines, vec![3, 4]);
    assert!(
        library.rejected[0]
            .message
            .contains("2 fields, the header has 3")
    );
    assert_eq!(library.rows_rejected, 2);
}

#[test]
fn unterminated_quote_is_named() {
    let library = load(b"part,kind,notes\nQX1,npn,fine\nQX2,npn,\"open\nQX3,npn,lost\n");
    assert!(library.find("QX1").is_some());
    assert!(
        library
            .rejected
            .iter()
            .any(|d| d.line == 3 && d.message.contains("quote")),
        "{:?}",
        library.rejected
    );
}

#[test]
fn a_one_megabyte_field_is_rejected_and_the_rest_loads() {
    let mut text = b"part,kind,notes\nQX1,npn,".to_vec();
    text.extend(std::iter::repeat_n(b'x', 1 << 20));
    text.extend_from_slice(b"\nQX2,npn,short\n");
    let library = load(&text);
    assert!(library.find("QX1").is_none());
    assert!(library.find("QX2").is_some());
    assert!(library.rejected[0].message.contains("over the limit"));
    assert!(library.rejected[0].text.len() < 1000);
}

#[test]
fn nan_inf_negative_and_overflow() {
    let text = b"part,kind,vceo\nQ1,npn,NaN\nQ2,npn,inf\nQ3,npn,-40 V\nQ4,npn,1e400\nQ5,npn,40\n";
    let library = load(text);
    let rejected: Vec<(u32, &str)> = library
        .rejected
        .iter()
        .map(|d| (d.line, d.message.as_str()))
        .collect();
    assert_eq!(rejected.len(), 3, "{rejected:?}");
    assert!(rejected[0].1.contains("not a finite value"));
    assert!(rejected[1].1.contains("not a finite value"));
    assert!(rejected[2].1.contains("out of range"));
    // A negative rating reads, is dropped and warned about.
    assert_eq!(bjt(&library, "Q3").vceo.get(), None);
    assert!(
        library
            .warnings
            .iter()
            .any(|w| w.line == 4 && w.message.contains("negative"))
    );
    assert_eq!(bjt(&library, "Q5").vceo.get(), Some(40.0));
}

#[test]
fn a_voltage_written_in_amps_is_rejected() {
    let library = load(b"part,kind,vceo\nQ1,npn,40 A\nQ2,npn,40 V\n");
    assert_eq!(library.rejected.len(), 1);
    let d = &library.rejected[0];
    assert_eq!(
        (d.line, d.column.as_str(), d.text.as_str()),
        (2, "vceo", "40 A")
    );
    assert!(d.message.contains("is a current, expected a voltage"));
    assert!(library.find("Q2").is_some());
}

#[test]
fn the_lint_example_message() {
    let library = load(b"part,kind,vceo\nQ1,npn,4O V\n");
    assert_eq!(
        library.rejected[0].message,
        "\"4O V\" is not a number (unknown unit or prefix \"O V\"; expected a voltage)"
    );
}

#[test]
fn the_same_part_twice_is_rejected_pointing_at_the_first() {
    let library = load(b"part,kind\nQ1,npn\nq1,npn\nQ2,npn\n");
    assert_eq!(library.parts.len(), 2);
    assert_eq!(library.rejected[0].line, 3);
    assert!(library.rejected[0].message.contains("test.csv:2"));
}

#[test]
fn unknown_kind_and_empty_part_are_rejected() {
    let library = load(b"part,kind\nQ1,triac\n,npn\nQ3,npn\n");
    assert_eq!(library.parts.len(), 1);
    assert!(
        library.rejected[0]
            .message
            .contains("unknown kind \"triac\"")
    );
    assert!(library.rejected[1].message.contains("part number is empty"));
}

#[test]
fn implausible_values_are_warned() {
    let library = load(b"part,kind,vceo,hfe_min,vce_sat\nQ1,npn,40,50000,0.2\nQ2,npn,1,100,2\n");
    assert_eq!(library.parts.len(), 2);
    assert!(
        library
            .warnings
            .iter()
            .any(|w| w.line == 2 && w.column == "hfe_min")
    );
    assert!(
        library
            .warnings
            .iter()
            .any(|w| w.line == 3 && w.column == "vce_sat")
    );
}

#[test]
fn a_header_repeated_mid_file_is_skipped() {
    let library = load(b"part,kind\nQ1,npn\npart,kind\nQ2,npn\n");
    assert_eq!(library.parts.len(), 2);
    assert_eq!(library.rows, 2);
    assert!(library.warnings.iter().any(|w| w.line == 3));
}

#[test]
fn ratings_of_other_kinds_are_ignored_in_mixed_files() {
    let library = load(b"part,kind,vceo,vrrm\nQ1,npn,40,\nD1,diode,,100\n");
    assert!(library.rejected.is_empty());
    assert_eq!(
        library
            .find("D1")
            .and_then(Part::diode)
            .and_then(|d| d.vrrm.get()),
        Some(100.0)
    );
}

#[test]
fn common_columns_read() {
    let text = "part,kind,price,stock,status,rohs,contact_form,coil_v,operate_ms\n\
                K1,relay,$1.20,\"12,000\",NRND,yes,1C,12 V,10\n";
    let library = load(text.as_bytes());
    let part = library.find("K1").unwrap();
    assert_eq!(part.price.get(), Some(1.2));
    assert_eq!(part.stock, Some(12_000));
    assert_eq!(part.status, Status::Nrnd);
    assert_eq!(part.rohs, Some(true));
    let relay = part.relay().unwrap();
    assert_eq!(relay.contact_form, Some(ContactForm::C(1)));
    assert_eq!(relay.operate_ms.get(), Some(0.01));
}

#[test]
fn folders_and_missing_paths() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("b.csv"), "part,kind\nQ2,npn\n").unwrap();
    std::fs::write(dir.path().join("a.CSV"), "part,kind\nQ1,npn\nQ2,pnp\n").unwrap();
    std::fs::write(dir.path().join("notes.txt"), "not a library").unwrap();
    let library = Library::load(&[dir.path()]).unwrap();
    assert_eq!(library.files.len(), 2);
    assert_eq!(library.parts.len(), 2);
    assert!(
        library.rejected[0].message.contains("a.CSV:3"),
        "{:?}",
        library.rejected
    );
    let missing = Library::load(&[dir.path().join("nope.csv")]).unwrap_err();
    assert!(matches!(missing, LoadError::Io { .. }));
    let empty = tempfile::tempdir().unwrap();
    assert!(matches!(
        Library::load(&[empty.path()]),
        Err(LoadError::NoCsvInFolder { .. })
    ));
}

mod properties {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        /// Whatever the bytes, reading never panics and every diagnostic has a 1-based line.
        #[test]
        fn arbitrary_bytes_never_panic(body in proptest::collection::vec(any::<u8>(), 0..400)) {
            let mut text = b"part,kind,vceo,ic_max,notes\n".to_vec();
            text.extend(body);
            let mut library = Library::new();
            if library.add_bytes("fuzz.csv", &text).is_ok() {
                for d in library.rejected.iter().chain(&library.warnings) {
                    prop_assert!(d.line >= 1);
                }
                prop_assert!(library.parts.len() <= library.rows);
            }
        }

        /// A rating written in engineering notation reads back within 0.5 %.
        #[test]
        fn written_ratings_read_back(vceo in 1.0f64..2000.0, ic in 1e-4f64..50.0) {
            let text = format!(
                "part,kind,vceo,ic_max\nQ1,npn,{},{}\n",
                crate::units::format_eng(vceo, crate::units::Dim::Volt),
                crate::units::format_eng(ic, crate::units::Dim::Amp)
            );
            let library = load(text.as_bytes());
            let q = bjt(&library, "Q1");
            prop_assert!((q.vceo.get().unwrap() - vceo).abs() <= 0.005 * vceo);
            prop_assert!((q.ic_max.get().unwrap() - ic).abs() <= 0.005 * ic);
        }
    }
}

#[test]
fn a_load_reports_its_progress_to_a_watcher() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from("part,kind,vceo\n");
    for i in 0..20_000 {
        text.push_str(&format!("QP{i},npn,{} V\n", 20 + i % 50));
    }
    std::fs::write(dir.path().join("a.csv"), &text).unwrap();
    std::fs::write(dir.path().join("b.csv"), text.replace("QP", "QR")).unwrap();
    let progress = LoadProgress::shared();
    let watcher = Arc::clone(&progress);
    let seen = std::thread::spawn(move || {
        // The counters only ever grow while a load runs.
        let mut last = 0;
        for _ in 0..1000 {
            let now = watcher.bytes();
            assert!(now >= last, "{now} < {last}");
            last = now;
            std::thread::yield_now();
        }
    });
    let library = Library::load_with_progress(&[dir.path()], Arc::clone(&progress)).unwrap();
    seen.join().unwrap();
    assert_eq!(library.parts.len(), 40_000);
    let total = 2 * text.len() as u64;
    assert_eq!(progress.total_bytes(), total);
    assert_eq!(progress.bytes(), total);
    assert_eq!(progress.rows(), 40_000);
    assert!((progress.fraction() - 1.0).abs() < 1e-12);
    assert_eq!(LoadProgress::default().fraction(), 0.0);
}

/// The kind lists partition the library: each holds only its kind, in library order, and a
/// part added later shows in its list.
#[test]
fn parts_of_kind_partition_the_library() {
    for (k, kind) in Kind::ALL.into_iter().enumerate() {
        assert_eq!(kind as usize, k, "Kind::ALL follows the declaration order");
    }
    let mut library = Library::demo();
    let mut seen = vec![false; library.parts.len()];
    for kind in Kind::ALL {
        let list = library.parts_of_kind(kind);
        assert!(
            list.windows(2).all(|w| w[0] < w[1]),
            "{kind:?} in library order"
        );
        for &i in list {
            assert_eq!(library.parts[i as usize].kind, kind);
            assert!(!seen[i as usize], "part {i} listed twice");
            seen[i as usize] = true;
        }
    }
    assert!(seen.iter().all(|&s| s), "every part is in a list");
    let relays = library.parts_of_kind(Kind::Relay).len();
    library
        .add_bytes(
            "more.csv",
            b"part,kind,coil_v,coil_r,contact_current\nRLX-NEW-1,relay,12 V,400,10 A\n",
        )
        .expect("the row reads");
    assert_eq!(library.parts_of_kind(Kind::Relay).len(), relays + 1);
}
