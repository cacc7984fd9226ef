//! Library loading speed: synthetic rows of every kind from `loadfit::synthetic` (every known
//! column, units in the cells, a few bad rows), read from memory.
//! `cargo bench --bench load`. The bar: 100 000 rows well under a second in release.

use loadfit::library::Library;

fn main() {
    divan::main();
}

#[divan::bench(args = [10_000, 100_000])]
fn load_rows(bencher: divan::Bencher, rows: u64) {
    let mut text = Vec::new();
    // Writing into a Vec cannot fail.
    loadfit::synthetic::write_library(&mut text, rows, 1).unwrap_or_default();
    bencher
        .counter(divan::counter::BytesCount::new(text.len()))
        .bench(|| {
            let mut library = Library::new();
            library
                .add_bytes("synthetic.csv", divan::black_box(&text))
                .map(|()| library.parts.len())
                .unwrap_or(0)
        });
}
