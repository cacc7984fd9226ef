//! Library loading speed: 100 000 synthetic rows of every kind, read from memory.
//! `cargo bench --bench load`. The bar: well under a second in release.

use loadfit::library::Library;
use std::fmt::Write;

fn main() {
    divan::main();
}

/// A deterministic synthetic library: `rows` parts cycling through the kinds, with units in
/// the cells as people write them.
fn synthetic(rows: usize) -> String {
    let mut text = String::from(
        "part,kind,package,pinout,maker,price,stock,status,vceo,ic_max,hfe_min,vce_sat,vds,id_max,rds_on,rds_on_vgs,vrrm,if_avg,vf,coil_v,coil_r,contact_a_ac,r_10lux,gamma\n",
    );
    for i in 0..rows {
        let _ = match i % 6 {
            0 => writeln!(
                text,
                "QN{i:07},npn,TO-92,EBC,Maker{m},0.{p:02},{s},active,{v} V,{c} mA,{h},0.2 V,,,,,,,,,,,,",
                m = i % 40,
                p = i % 97,
                s = i % 5000,
                v = 20 + i % 80,
                c = 100 + i % 900,
                h = 50 + i % 250
            ),
            1 => writeln!(
                text,
                "QP{i:07},pnp,SOT-23,BEC,Maker{m},0.{p:02},{s},active,{v},0.{c},{h},0.25,,,,,,,,,,,,",
                m = i % 40,
                p = i % 97,
                s = i % 5000,
                v = 20 + i % 80,
                c = 100 + i % 900,
                h = 50 + i % 250
            ),
            2 => writeln!(
                text,
                "MN{i:07},nmos,SOT-23,GSD,Maker{m},0.{p:02},{s},nrnd,,,,,{v} V,{c}00 mA,{r} mohm,4.5 V,,,,,,,,",
                m = i % 40,
                p = i % 97,
                s = i % 5000,
                v = 20 + i % 80,
                c = 1 + i % 90,
                r = 20 + i % 400
            ),
            3 => writeln!(
                text,
                "DX{i:07},diode,DO-41,AK,Maker{m},0.{p:02},{s},active,,,,,,,,,{v}0 V,1 A,1.0 V,,,,,",
                m = i % 40,
                p = i % 97,
                s = i % 5000,
                v = 5 + i % 95
            ),
            4 => writeln!(
                text,
                "KR{i:07},relay,THT,,Maker{m},1.{p:02},{s},active,,,,,,,,,,,,12 V,{r} ohm,10 A,,",
                m = i % 40,
                p = i % 97,
                s = i % 500,
                r = 300 + i % 200
            ),
            _ => writeln!(
                text,
                "LD{i:07},photocell,5mm,,Maker{m},0.{p:02},{s},obsolete,,,,,,,,,,,,,,,{r}k,0.{g}",
                m = i % 40,
                p = i % 97,
                s = i % 500,
                r = 5 + i % 45,
                g = 5 + i % 5
            ),
        };
    }
    text
}

#[divan::bench(args = [10_000, 100_000])]
fn load_rows(bencher: divan::Bencher, rows: usize) {
    let text = synthetic(rows);
    bencher
        .counter(divan::counter::BytesCount::new(text.len()))
        .bench(|| {
            let mut library = Library::new();
            library
                .add_bytes("synthetic.csv", divan::black_box(text.as_bytes()))
                .map(|()| library.parts.len())
                .unwrap_or(0)
        });
}
