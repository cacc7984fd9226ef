//! The parts library: the user's CSV file(s) read into typed parts, with a diagnostic for every
//! row that cannot be used and a warning for every value that reads but looks wrong.
//!
//! loadfit never writes to a library file. See DESIGN.md section 3 for the format and
//! [`columns`] for the known columns and their aliases.

pub mod columns;
pub mod lint;
pub mod part;
mod read;

pub use part::{
    Bjt, ContactForm, Diode, Extras, Kind, Mosfet, Note, Part, Photocell, Rating, Ratings, Relay,
    Source, Status, Sym, Text,
};

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use thiserror::Error;

/// The built-in demo library (invented parts), embedded so `loadfit` runs with no files.
pub const DEMO_CSV: &str = include_str!("../data/demo-parts.csv");

/// The name the demo library's file is shown under.
pub const DEMO_NAME: &str = "demo-parts.csv (built in)";

/// Limits that keep a hostile file from exhausting memory or time. A cell or row past them is
/// rejected with a message naming the limit; past the row limits, the rest of the file is not
/// read (and the message says so).
pub mod limits {
    /// Largest cell, in bytes (64 KiB): far above any real rating or note.
    pub const MAX_CELL_BYTES: usize = 64 * 1024;
    /// Most columns a header may have.
    pub const MAX_COLUMNS: usize = 4096;
    /// Most diagnostics kept per file; the rest are counted, not stored.
    pub const MAX_DIAGNOSTICS_PER_FILE: usize = 10_000;
    /// Most rows one library reads, over all its files (5 million: a part with a few text
    /// cells takes about 270 bytes, so the parts stay near 1.4 GB). The row past it is rejected
    /// with a message and the rest of its file is not read.
    pub const MAX_ROWS: usize = 5_000_000;
    /// Largest row, in bytes (16 MiB), line ends and quoted line breaks included. A file with
    /// no line ends, a quote left open in a large file or an endless stream stops here instead
    /// of filling memory; the rest of the file is not read.
    pub const MAX_ROW_BYTES: u64 = 16 * 1024 * 1024;
    /// Largest UTF-16 file (256 MiB), which is decoded whole before it is read.
    pub const MAX_UTF16_FILE_BYTES: u64 = 256 * 1024 * 1024;
    /// Longest text kept in a diagnostic's message, in characters; longer ones are cut.
    pub const MAX_MESSAGE_CHARS: usize = 600;
}

/// One problem found while reading a library: where (file, line, column), the text and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    /// Index into [`Library::files`].
    pub file: u32,
    /// 1-based line of the file as a spreadsheet numbers it (the header is line 1).
    pub line: u32,
    /// The column's header name as written in the file, or empty for a whole-row problem.
    pub column: String,
    /// The offending text, shortened to 200 characters.
    pub text: String,
    /// What is wrong and, where it helps, what to do.
    pub message: String,
}

/// Why a library could not be read at all.
#[derive(Debug, Error)]
pub enum LoadError {
    /// The file or folder could not be opened or read.
    #[error("{path}: cannot read: {source}")]
    Io {
        /// The path given.
        path: PathBuf,
        /// The operating system's reason.
        #[source]
        source: std::io::Error,
    },
    /// The file has no bytes, or nothing but blank lines.
    #[error("{path}: the file is empty; a library needs a header line and one row a part")]
    Empty {
        /// The file.
        path: PathBuf,
    },
    /// The header lacks a required column.
    #[error(
        "{path}: line 1: no `{column}` column (found: {found}); add one, or rename the column holding it"
    )]
    MissingColumn {
        /// The file.
        path: PathBuf,
        /// The required column (`part` or `kind`).
        column: &'static str,
        /// The header cells found, shortened.
        found: String,
    },
    /// A folder holds no `*.csv` file.
    #[error("{path}: the folder holds no .csv file")]
    NoCsvInFolder {
        /// The folder.
        path: PathBuf,
    },
    /// The file is past one of the [`limits`] before its header could be read (a header line
    /// over [`limits::MAX_ROW_BYTES`], a UTF-16 file over [`limits::MAX_UTF16_FILE_BYTES`]).
    #[error("{path}: {message}")]
    OverLimit {
        /// The file.
        path: PathBuf,
        /// Which limit, and what to do.
        message: String,
    },
    /// More columns than [`limits::MAX_COLUMNS`].
    #[error("{path}: line 1: {columns} columns, over the limit of {limit}; is this a parts list?")]
    TooManyColumns {
        /// The file.
        path: PathBuf,
        /// Columns found.
        columns: usize,
        /// The limit.
        limit: usize,
    },
}

/// The parts of one or more CSV files, with what went wrong reading them.
#[derive(Debug, Default, Clone)]
pub struct Library {
    /// The parts, in file then row order.
    pub parts: Vec<Part>,
    /// The files read, as shown to the user.
    pub files: Vec<String>,
    /// Names of the columns loadfit does not know, across all files.
    pub extra_columns: Vec<String>,
    /// Rows that could not be used.
    pub rejected: Vec<Diagnostic>,
    /// Values that read but look wrong, and notes on the files.
    pub warnings: Vec<Diagnostic>,
    /// Data rows seen (blank lines not counted).
    pub rows: usize,
    /// Rows rejected (one row may give several diagnostics).
    pub rows_rejected: usize,
    /// Warnings and rejections seen per file, stored or not (see [`limits`]).
    pub(crate) diagnostic_counts: Vec<[usize; 2]>,
    /// A row limit below [`limits::MAX_ROWS`], if one was set.
    row_limit: Option<usize>,
    /// Where a load in progress reports how far it has come, if anyone watches.
    progress: Option<Arc<LoadProgress>>,
    strings: Vec<Box<str>>,
    string_ids: HashMap<Box<str>, u32, BuildHasherDefault<Fnv>>,
    /// Part indices by part number (hashed without regard to case): 4 bytes a part plus the
    /// table's control bytes, where a map from hash to index would take 16.
    index: hashbrown::HashTable<u32>,
    /// Bytes in the file being read, when known: the reader sizes the tables from it.
    pub(crate) size_hint: u64,
    /// Each part's place in part-number order, found when first asked for.
    number_order: std::sync::OnceLock<Vec<u32>>,
    /// The parts' indices grouped by kind, found when first asked for.
    by_kind: std::sync::OnceLock<KindIndex>,
}

/// Part indices grouped by kind: one list of 4 bytes a part and where each kind's run starts.
#[derive(Debug, Default, Clone)]
struct KindIndex {
    indices: Vec<u32>,
    /// `indices[starts[k]..starts[k + 1]]` are the parts of the kind `k` (`kind as usize`).
    starts: [usize; Kind::ALL.len() + 1],
}

impl Library {
    /// An empty library.
    #[must_use]
    pub fn new() -> Library {
        let mut library = Library::default();
        library.intern("");
        library
    }

    /// The built-in demo library.
    #[must_use]
    pub fn demo() -> Library {
        let mut library = Library::new();
        // The embedded demo has a `part` and a `kind` column and rows: the test
        // `demo_library_loads_every_row` proves this read cannot fail.
        read::read_bytes(&mut library, DEMO_NAME, DEMO_CSV.as_bytes())
            .expect("the built-in demo library reads");
        library
    }

    /// Reads the files named, each a CSV file or a folder of `*.csv` files (read in name order).
    ///
    /// # Errors
    /// [`LoadError`] when a path cannot be read, a folder has no CSV file, or a file is empty or
    /// lacks the `part` or `kind` column. Row-level problems are not errors: they are in
    /// [`Library::rejected`] and [`Library::warnings`].
    pub fn load<P: AsRef<Path>>(paths: &[P]) -> Result<Library, LoadError> {
        let mut library = Library::new();
        for path in paths {
            library.add_path(path.as_ref())?;
        }
        Ok(library)
    }

    /// Reads the files named as [`Library::load`] does, reporting rows and bytes read to
    /// `progress` as it goes, so another thread can show a gauge while a large library loads.
    ///
    /// # Errors
    /// As [`Library::load`].
    pub fn load_with_progress<P: AsRef<Path>>(
        paths: &[P],
        progress: Arc<LoadProgress>,
    ) -> Result<Library, LoadError> {
        let total: u64 = paths.iter().map(|p| library_bytes(p.as_ref())).sum();
        progress.total_bytes.store(total, Ordering::Relaxed);
        let mut library = Library::new();
        library.progress = Some(Arc::clone(&progress));
        for path in paths {
            library.add_path(path.as_ref())?;
        }
        library.progress = None;
        Ok(library)
    }

    /// Reads one more file or folder into this library.
    ///
    /// # Errors
    /// As [`Library::load`].
    pub fn add_path(&mut self, path: &Path) -> Result<(), LoadError> {
        let io = |source| LoadError::Io {
            path: path.to_path_buf(),
            source,
        };
        let meta = std::fs::metadata(path).map_err(io)?;
        if meta.is_dir() {
            let mut files: Vec<PathBuf> = std::fs::read_dir(path)
                .map_err(io)?
                .filter_map(Result::ok)
                .map(|entry| entry.path())
                .filter(|p| {
                    p.is_file() && p.extension().is_some_and(|e| e.eq_ignore_ascii_case("csv"))
                })
                .collect();
            files.sort();
            if files.is_empty() {
                return Err(LoadError::NoCsvInFolder {
                    path: path.to_path_buf(),
                });
            }
            for file in files {
                self.add_file(&file)?;
            }
            Ok(())
        } else {
            self.add_file(path)
        }
    }

    fn add_file(&mut self, path: &Path) -> Result<(), LoadError> {
        let file = std::fs::File::open(path).map_err(|source| LoadError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        let reader = std::io::BufReader::with_capacity(256 * 1024, file);
        self.size_hint = std::fs::metadata(path).map_or(0, |m| m.len());
        let result =
            read::read_reader(self, &path.display().to_string(), reader).map_err(|e| e.at(path));
        if let Some(progress) = &self.progress {
            let size = std::fs::metadata(path).map_or(0, |m| m.len());
            let done = progress.files_bytes.fetch_add(size, Ordering::Relaxed) + size;
            progress.bytes.store(done, Ordering::Relaxed);
            progress.rows.store(self.rows as u64, Ordering::Relaxed);
        }
        result
    }

    /// Tells a watcher how far the file being read has come (`position` bytes into it).
    pub(crate) fn report_progress(&self, position: u64) {
        if let Some(progress) = &self.progress {
            let before = progress.files_bytes.load(Ordering::Relaxed);
            progress.bytes.store(before + position, Ordering::Relaxed);
            progress.rows.store(self.rows as u64, Ordering::Relaxed);
        }
    }

    /// Reads CSV text held in memory, shown under `name`.
    ///
    /// # Errors
    /// As [`Library::load`].
    pub fn add_bytes(&mut self, name: &str, bytes: &[u8]) -> Result<(), LoadError> {
        self.size_hint = bytes.len() as u64;
        read::read_bytes(self, name, bytes).map_err(|e| e.at(Path::new(name)))
    }

    /// Lowers the most rows this library reads, over all its files, to `rows` (never above
    /// [`limits::MAX_ROWS`]): for a host with little memory, and for tests of the limit.
    pub fn set_row_limit(&mut self, rows: usize) {
        self.row_limit = Some(rows.min(limits::MAX_ROWS));
    }

    /// The most rows this library reads, over all its files.
    #[must_use]
    pub fn row_limit(&self) -> usize {
        self.row_limit.unwrap_or(limits::MAX_ROWS)
    }

    /// The text of an interned string (package, pinout, maker).
    #[must_use]
    pub fn text(&self, sym: Sym) -> &str {
        self.strings.get(sym.0 as usize).map_or("", |s| s)
    }

    /// The part with this number (compared without regard to case or surrounding spaces).
    #[must_use]
    pub fn find(&self, number: &str) -> Option<&Part> {
        let key = number.trim();
        self.index
            .find(part_hash(key), |&i| {
                self.parts
                    .get(i as usize)
                    .is_some_and(|p| p.number.eq_ignore_ascii_case(key))
            })
            .and_then(|&i| self.parts.get(i as usize))
    }

    /// The indices of the parts of `kind`, in library order. A fit of a million parts holds
    /// each role's few kinds only, and walking these lists (4 bytes a part) is far cheaper
    /// than reading every part's kind. Found on first use and kept.
    #[must_use]
    pub fn parts_of_kind(&self, kind: Kind) -> &[u32] {
        let index = self.by_kind.get_or_init(|| {
            let mut counts = [0usize; Kind::ALL.len()];
            for part in &self.parts {
                counts[part.kind as usize] += 1;
            }
            let mut starts = [0usize; Kind::ALL.len() + 1];
            for k in 0..counts.len() {
                starts[k + 1] = starts[k] + counts[k];
            }
            let mut next = starts;
            let mut indices = vec![0u32; self.parts.len()];
            for (i, part) in self.parts.iter().enumerate() {
                let slot = &mut next[part.kind as usize];
                // At most `limits::MAX_ROWS` parts: an index fits in u32.
                indices[*slot] = i as u32;
                *slot += 1;
            }
            KindIndex { indices, starts }
        });
        let k = kind as usize;
        &index.indices[index.starts[k]..index.starts[k + 1]]
    }

    /// Each part's place (0-based) when the parts are sorted by part number, byte by byte:
    /// ranking breaks ties by part number, and comparing two integers is far cheaper than
    /// comparing two numbers' texts a million times over. Found on first use and kept.
    #[must_use]
    pub fn number_order(&self) -> &[u32] {
        self.number_order.get_or_init(|| {
            // Sort by the first 12 bytes and the part's index packed in one integer (16 bytes
            // a part while sorting), zero-padded so a shorter number sorts first as it does
            // byte by byte; then by the whole text where those 12 bytes tie.
            const PREFIX: usize = 12;
            let key = |i: usize, number: &str| {
                let mut bytes = [0u8; 16];
                let n = number.len().min(PREFIX);
                bytes[..n].copy_from_slice(&number.as_bytes()[..n]);
                // At most `limits::MAX_ROWS` parts: the index fits the low 32 bits.
                bytes[PREFIX..].copy_from_slice(&(i as u32).to_be_bytes());
                u128::from_be_bytes(bytes)
            };
            let mut sorted: Vec<u128> = self
                .parts
                .iter()
                .enumerate()
                .map(|(i, p)| key(i, &p.number))
                .collect();
            sorted.sort_unstable();
            let index = |k: u128| (k & u128::from(u32::MAX)) as usize;
            let number = |k: u128| self.parts.get(index(k)).map_or("", |p| p.number.as_str());
            let mut start = 0;
            while start < sorted.len() {
                let prefix = sorted[start] >> 32;
                let mut end = start + 1;
                while end < sorted.len() && sorted[end] >> 32 == prefix {
                    end += 1;
                }
                if end - start > 1 {
                    sorted[start..end].sort_unstable_by(|&a, &b| number(a).cmp(number(b)));
                }
                start = end;
            }
            let mut order = vec![0u32; self.parts.len()];
            for (place, &k) in sorted.iter().enumerate() {
                order[index(k)] = place as u32;
            }
            order
        })
    }

    /// The file a part came from, as shown to the user.
    #[must_use]
    pub fn file_name(&self, source: Source) -> &str {
        self.files.get(source.file as usize).map_or("", |s| s)
    }

    /// Number of parts of each kind, in [`Kind::ALL`] order, kinds with none left out.
    #[must_use]
    pub fn kind_counts(&self) -> Vec<(Kind, usize)> {
        let mut counts = [0usize; Kind::ALL.len()];
        for part in &self.parts {
            counts[part.kind as usize] += 1;
        }
        Kind::ALL
            .into_iter()
            .zip(counts)
            .filter(|&(_, n)| n > 0)
            .collect()
    }

    /// The value of an unknown column for a part, by column name.
    #[must_use]
    pub fn extra<'a>(&'a self, part: &'a Part, column: &str) -> Option<&'a str> {
        let id = self.extra_columns.iter().position(|c| c == column)? as u32;
        part.extra
            .iter()
            .find(|(c, _)| *c == id)
            .map(|(_, text)| &**text)
    }

    pub(crate) fn intern(&mut self, text: &str) -> Sym {
        if let Some(&id) = self.string_ids.get(text) {
            return Sym(id);
        }
        let id = self.strings.len() as u32;
        self.strings.push(text.into());
        self.string_ids.insert(text.into(), id);
        Sym(id)
    }

    pub(crate) fn extra_column_id(&mut self, name: &str) -> u32 {
        if let Some(i) = self.extra_columns.iter().position(|c| c == name) {
            return i as u32;
        }
        self.extra_columns.push(name.to_string());
        (self.extra_columns.len() - 1) as u32
    }

    /// Makes room for `more` parts, so a large file's tables are sized once instead of
    /// growing (and the number index rehashing) again and again.
    pub(crate) fn reserve_parts(&mut self, more: usize) {
        let more = more.min(self.row_limit().saturating_sub(self.parts.len()));
        self.parts.reserve(more);
        let parts = &self.parts;
        self.index.reserve(more, |&i| {
            parts.get(i as usize).map_or(0, |p| part_hash(&p.number))
        });
    }

    /// Adds a part unless its number is taken; gives back the holder of the number otherwise.
    pub(crate) fn push_part(&mut self, part: Part) -> Result<(), Source> {
        let parts = &self.parts;
        let hash = part_hash(&part.number);
        let entry = self.index.entry(
            hash,
            |&i| {
                parts
                    .get(i as usize)
                    .is_some_and(|p| p.number.eq_ignore_ascii_case(&part.number))
            },
            // Growing the table hashes the numbers again: the parts are the only copy.
            |&i| parts.get(i as usize).map_or(0, |p| part_hash(&p.number)),
        );
        match entry {
            hashbrown::hash_table::Entry::Occupied(held) => {
                let holder = *held.get() as usize;
                // The index only holds indices of parts pushed before.
                Err(parts.get(holder).map_or(part.source, |p| p.source))
            }
            hashbrown::hash_table::Entry::Vacant(slot) => {
                // Row count is capped by `limits::MAX_ROWS`, far below u32::MAX.
                slot.insert(parts.len() as u32);
                self.parts.push(part);
                self.number_order.take();
                self.by_kind.take();
                Ok(())
            }
        }
    }
}

/// How far a load has come, updated by the loading thread and read by another: the
/// workbench's gauge, the CLI's progress line. Counters only, so reading them never waits.
#[derive(Debug, Default)]
pub struct LoadProgress {
    total_bytes: AtomicU64,
    files_bytes: AtomicU64,
    bytes: AtomicU64,
    rows: AtomicU64,
}

impl LoadProgress {
    /// A fresh counter, shared between the loader and its watcher.
    #[must_use]
    pub fn shared() -> Arc<LoadProgress> {
        Arc::new(LoadProgress::default())
    }

    /// Bytes read so far, over all the files.
    #[must_use]
    pub fn bytes(&self) -> u64 {
        self.bytes.load(Ordering::Relaxed)
    }

    /// Bytes in all the files to be read (0 until the load has looked at them).
    #[must_use]
    pub fn total_bytes(&self) -> u64 {
        self.total_bytes.load(Ordering::Relaxed)
    }

    /// Data rows read so far.
    #[must_use]
    pub fn rows(&self) -> u64 {
        self.rows.load(Ordering::Relaxed)
    }

    /// Megabytes (10^6 bytes) read a second over `seconds` of loading (0 before any time).
    #[must_use]
    pub fn rate(&self, seconds: f64) -> f64 {
        if seconds > 0.0 {
            self.bytes() as f64 / 1e6 / seconds
        } else {
            0.0
        }
    }

    /// The share read, from 0 to 1 (0 while the size is not known).
    #[must_use]
    pub fn fraction(&self) -> f64 {
        let total = self.total_bytes();
        if total == 0 {
            0.0
        } else {
            (self.bytes() as f64 / total as f64).clamp(0.0, 1.0)
        }
    }
}

/// Bytes in a library path: the file's size, or the sum of a folder's `*.csv` files; 0 when
/// it cannot be read (the load itself then reports why).
fn library_bytes(path: &Path) -> u64 {
    let Ok(meta) = std::fs::metadata(path) else {
        return 0;
    };
    if !meta.is_dir() {
        return meta.len();
    }
    std::fs::read_dir(path).map_or(0, |entries| {
        entries
            .filter_map(Result::ok)
            .map(|entry| entry.path())
            .filter(|p| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("csv")))
            .filter_map(|p| std::fs::metadata(p).ok())
            .filter(std::fs::Metadata::is_file)
            .map(|m| m.len())
            .sum()
    })
}

/// A hash of a part number that ignores ASCII case.
fn part_hash(number: &str) -> u64 {
    let mut hasher = Fnv::default();
    for byte in number.bytes() {
        hasher.write_u8(byte.to_ascii_lowercase());
    }
    hasher.finish()
}

/// FNV-1a, 64 bits: a fast hash for the short keys of the library's maps (part numbers,
/// package and maker names). The keys come from the user's own files, so the flooding that
/// SipHash guards against is not a concern here, and loading a million rows hashes each row
/// several times.
#[derive(Debug, Clone, Copy)]
pub struct Fnv(u64);

impl Default for Fnv {
    fn default() -> Self {
        Fnv(0xcbf2_9ce4_8422_2325)
    }
}

impl Hasher for Fnv {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for &byte in bytes {
            self.0 ^= u64::from(byte);
            self.0 = self.0.wrapping_mul(0x0100_0000_01b3);
        }
    }
}

/// Shortens a text to at most 200 characters for a diagnostic, marking the cut.
#[must_use]
pub fn shorten(text: &str) -> String {
    const MAX: usize = 200;
    match text.char_indices().nth(MAX) {
        Some((cut, _)) => format!("{}… ({} bytes in all)", &text[..cut], text.len()),
        None => text.to_string(),
    }
}

#[cfg(test)]
mod tests;
