//! Reading one CSV source into the library: encoding, delimiter, header plan, rows.
//!
//! Rows are read as `csv::ByteRecord`s and cells are parsed from borrowed `&str`s, so a
//! well-formed row allocates only the strings the part keeps.

use super::columns::{Field, FieldSpec, header_scale, normalise_header};
use super::part::{
    ContactForm, Extras, Kind, Note, Part, Rating, Ratings, Source, Status, Sym, Text,
};
use super::{Diagnostic, Library, LoadError, limits, shorten};
use crate::units::{self, Dim, ParseOptions};
use std::borrow::Cow;
use std::cell::Cell;
use std::io::{BufRead, Read};
use std::path::Path;
use std::rc::Rc;

/// A whole-source failure, before the path is attached.
#[derive(Debug)]
pub(super) enum ReadError {
    Io(std::io::Error),
    Empty,
    MissingColumn { column: &'static str, found: String },
    TooManyColumns(usize),
    OverLimit(String),
}

impl ReadError {
    pub(super) fn at(self, path: &Path) -> LoadError {
        let path = path.to_path_buf();
        match self {
            ReadError::Io(source) => LoadError::Io { path, source },
            ReadError::Empty => LoadError::Empty { path },
            ReadError::MissingColumn { column, found } => LoadError::MissingColumn {
                path,
                column,
                found,
            },
            ReadError::TooManyColumns(columns) => LoadError::TooManyColumns {
                path,
                columns,
                limit: limits::MAX_COLUMNS,
            },
            ReadError::OverLimit(message) => LoadError::OverLimit { path, message },
        }
    }
}

/// Reads CSV text held in memory.
pub(super) fn read_bytes(library: &mut Library, name: &str, bytes: &[u8]) -> Result<(), ReadError> {
    read_reader(library, name, bytes)
}

/// Reads CSV text from a buffered reader, detecting the encoding and the delimiter from the
/// first buffer.
pub(super) fn read_reader<R: BufRead>(
    library: &mut Library,
    name: &str,
    mut reader: R,
) -> Result<(), ReadError> {
    let head = reader.fill_buf().map_err(ReadError::Io)?;
    let utf16 = if head.starts_with(&[0xFF, 0xFE]) {
        Some((encoding_rs::UTF_16LE, true))
    } else if head.starts_with(&[0xFE, 0xFF]) {
        Some((encoding_rs::UTF_16BE, true))
    } else {
        utf16_without_bom(head).map(|encoding| (encoding, false))
    };
    if let Some((encoding, bom)) = utf16 {
        // UTF-16 files are rare and small: decode whole (up to a limit), then read as UTF-8.
        let mut raw = Vec::new();
        reader
            .take(limits::MAX_UTF16_FILE_BYTES + 1)
            .read_to_end(&mut raw)
            .map_err(ReadError::Io)?;
        if raw.len() as u64 > limits::MAX_UTF16_FILE_BYTES {
            return Err(ReadError::OverLimit(format!(
                "a UTF-16 file over {} MiB, the most loadfit decodes; save it as UTF-8",
                limits::MAX_UTF16_FILE_BYTES >> 20
            )));
        }
        let text = if bom {
            encoding.decode_with_bom_removal(&raw).0
        } else {
            encoding.decode_without_bom_handling(&raw).0
        };
        let file = push_file(library, name);
        warn(
            library,
            file,
            1,
            "",
            "",
            format!(
                "the file is {} text{}; it was decoded, but UTF-8 is preferred",
                encoding.name(),
                if bom {
                    ""
                } else {
                    " without a byte-order mark"
                }
            ),
        );
        let bytes = text.into_owned().into_bytes();
        return read_records(library, file, &bytes[..], detect_delimiter(&bytes));
    }
    let delimiter = detect_delimiter(head);
    let file = push_file(library, name);
    read_records(library, file, reader, delimiter)
}

/// UTF-16 without a byte-order mark, told by its ASCII text: a NUL in every other byte (after
/// each character in little endian, before it in big endian) and none in the other half.
fn utf16_without_bom(head: &[u8]) -> Option<&'static encoding_rs::Encoding> {
    let pairs = head.len().min(512) / 2;
    if pairs < 2 {
        return None;
    }
    let (mut even, mut odd) = (0, 0);
    for pair in head[..pairs * 2].chunks_exact(2) {
        even += usize::from(pair[0] == 0);
        odd += usize::from(pair[1] == 0);
    }
    let most = pairs * 3 / 4;
    if odd >= most && even == 0 {
        Some(encoding_rs::UTF_16LE)
    } else if even >= most && odd == 0 {
        Some(encoding_rs::UTF_16BE)
    } else {
        None
    }
}

fn push_file(library: &mut Library, name: &str) -> u32 {
    library.files.push(name.to_string());
    library.diagnostic_counts.push([0, 0]);
    (library.files.len() - 1) as u32
}

/// Picks the delimiter from the first line: the most frequent of `,`, `;` and tab outside quotes.
fn detect_delimiter(head: &[u8]) -> u8 {
    let mut counts = [0usize; 3];
    let mut quoted = false;
    for &byte in head {
        match byte {
            b'"' => quoted = !quoted,
            b'\n' | b'\r' if !quoted => break,
            b',' if !quoted => counts[0] += 1,
            b';' if !quoted => counts[1] += 1,
            b'\t' if !quoted => counts[2] += 1,
            _ => {}
        }
    }
    let delimiters = [b',', b';', b'\t'];
    let best = (0..3).max_by_key(|&i| (counts[i], 3 - i)).unwrap_or(0);
    if counts[best] == 0 {
        b','
    } else {
        delimiters[best]
    }
}

/// How one column of the file is read.
#[derive(Debug, Clone, Copy)]
enum Plan {
    /// A known field; `scale` applies to bare numbers (from the header's unit or the column's
    /// natural unit).
    Known {
        spec: &'static FieldSpec,
        scale: f64,
    },
    /// An unknown column, kept under this extra-column id.
    Extra(u32),
}

/// Per-file state shared by the row reader.
struct FileState {
    file: u32,
    header: Vec<String>,
    plans: Vec<Plan>,
    part_column: usize,
    kind_column: usize,
    options: ParseOptions,
    semicolon: bool,
    delimiter: u8,
    warned_encoding: bool,
    header_keys: Vec<String>,
}

fn read_records<R: Read>(
    library: &mut Library,
    file: u32,
    reader: R,
    delimiter: u8,
) -> Result<(), ReadError> {
    // Lines end at `\n` (a `\r` before it is trimmed with the cell; a lone `\r` is made a
    // `\n`): the csv crate's own line count drifts on CRLF files and skips empty lines, and
    // diagnostics must name the line a spreadsheet shows. `BlankLineKeeper` makes empty lines
    // visible so they are counted, and stops a row at `limits::MAX_ROW_BYTES`: `row_start` is
    // where the row being read began.
    let row_start = Rc::new(Cell::new(0u64));
    let mut csv = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(delimiter)
        .terminator(csv::Terminator::Any(b'\n'))
        .from_reader(BlankLineKeeper::new(reader, Rc::clone(&row_start)));
    let mut record = csv::ByteRecord::new();
    let line_of = |record: &csv::ByteRecord| record.position().map_or(0, |p| p.line() as u32);

    // The header: the first non-blank record.
    loop {
        match csv.read_byte_record(&mut record) {
            Ok(false) => return Err(ReadError::Empty),
            Ok(true) => {
                row_start.set(csv.position().byte());
                if !is_blank(&record) {
                    break;
                }
            }
            Err(e) if is_row_too_long(&e) => {
                return Err(ReadError::OverLimit(format!(
                    "line {}: {}",
                    line_of(&record).max(1),
                    row_too_long_message()
                )));
            }
            Err(e) => return Err(ReadError::Io(std::io::Error::other(e))),
        }
    }
    let mut state = plan_header(library, file, &record, delimiter)?;
    // After this many rows the rest of the file's rows are estimated from its size.
    const SAMPLE_ROWS: usize = 4096;
    let first_row = library.rows;
    let sample_from = csv.position().byte();

    loop {
        match csv.read_byte_record(&mut record) {
            Ok(false) => break,
            Ok(true) => {
                row_start.set(csv.position().byte());
                if is_blank(&record) {
                    continue;
                }
                if library.rows >= library.row_limit() {
                    let message = format!(
                        "the library already holds {} rows, the most loadfit reads; this row and the rest of the file are not read: keep the parts you use in a smaller library",
                        library.row_limit()
                    );
                    library.rows += 1;
                    library.rows_rejected += 1;
                    reject_last(library, state.file, line_of(&record), message);
                    break;
                }
                library.rows += 1;
                if library.rows.is_multiple_of(8192) {
                    library.report_progress(csv.position().byte());
                }
                if library.rows - first_row == SAMPLE_ROWS && library.size_hint > 0 {
                    let sampled = csv.position().byte().saturating_sub(sample_from).max(1);
                    let left = library.size_hint.saturating_sub(csv.position().byte());
                    let estimate = left.saturating_mul(SAMPLE_ROWS as u64) / sampled;
                    library.reserve_parts(usize::try_from(estimate).unwrap_or(usize::MAX));
                }
                // Validate the row's UTF-8 once (a single ASCII test for most rows) rather than
                // cell by cell; a row that is not UTF-8 is read cell by cell as before.
                match csv::StringRecord::from_byte_record(std::mem::take(&mut record)) {
                    Ok(text) => {
                        read_row(library, &mut state, text.as_byte_record(), Some(&text));
                        record = text.into_byte_record();
                    }
                    Err(error) => {
                        record = error.into_byte_record();
                        read_row(library, &mut state, &record, None);
                    }
                }
            }
            Err(e) if is_row_too_long(&e) => {
                library.rows += 1;
                library.rows_rejected += 1;
                reject_last(
                    library,
                    state.file,
                    line_of(&record),
                    row_too_long_message(),
                );
                break;
            }
            Err(e) => {
                let line = e.position().map_or(0, |p| p.line() as u32);
                library.rows += 1;
                reject(
                    library,
                    &mut state,
                    line,
                    "",
                    "",
                    format!("unreadable row: {e}"),
                );
                library.rows_rejected += 1;
            }
        }
    }
    if library.parts.iter().all(|p| p.source.file != file) && library.rows == 0 {
        warn(
            library,
            file,
            1,
            "",
            "",
            "the file has a header and no rows".to_string(),
        );
    }
    Ok(())
}

/// The error a row over [`limits::MAX_ROW_BYTES`] ends the reading with.
#[derive(Debug)]
struct RowTooLong;

impl std::fmt::Display for RowTooLong {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&row_too_long_message())
    }
}

impl std::error::Error for RowTooLong {}

fn row_too_long_message() -> String {
    format!(
        "a row over {} MiB, the most loadfit reads (a quote left open, or not a parts library); the rest of the file is not read",
        limits::MAX_ROW_BYTES >> 20
    )
}

fn is_row_too_long(error: &csv::Error) -> bool {
    match error.kind() {
        csv::ErrorKind::Io(e) => e.get_ref().is_some_and(|inner| inner.is::<RowTooLong>()),
        _ => false,
    }
}

/// A reader that puts a space on every empty line, so the csv reader sees a blank record there
/// (which loadfit skips) instead of skipping the line uncounted; that turns a lone CR (classic
/// Mac line ends, or one mixed into a CRLF file) into a line end; and that fails with
/// [`RowTooLong`] once more than [`limits::MAX_ROW_BYTES`] have been read since `row_start`.
struct BlankLineKeeper<R> {
    inner: R,
    buffer: Vec<u8>,
    start: usize,
    last: u8,
    /// A CR that ended the last chunk, held back to see whether an LF follows it.
    pending_cr: bool,
    /// Bytes handed to the csv reader so far.
    delivered: u64,
    /// Where the row being read began, in delivered bytes (set by the row loop).
    row_start: Rc<Cell<u64>>,
}

impl<R: Read> BlankLineKeeper<R> {
    fn new(inner: R, row_start: Rc<Cell<u64>>) -> Self {
        BlankLineKeeper {
            inner,
            buffer: Vec::new(),
            start: 0,
            last: b'\n',
            pending_cr: false,
            delivered: 0,
            row_start,
        }
    }

    /// Reads the next chunk into `buffer`; false at the end of the input.
    fn fill(&mut self) -> std::io::Result<bool> {
        self.buffer.clear();
        if self.pending_cr {
            self.buffer.push(b'\r');
        }
        let held = self.buffer.len();
        self.buffer.resize(held + 128 * 1024, 0);
        let n = self.inner.read(&mut self.buffer[held..])?;
        self.buffer.truncate(held + n);
        self.start = 0;
        self.pending_cr = false;
        if self.buffer.is_empty() {
            return Ok(false);
        }
        // A CR ending the chunk may be the first half of a CRLF: it waits for the next chunk
        // (at the end of the input it is a lone CR, and becomes a line end below).
        if n > 0 && self.buffer.last() == Some(&b'\r') {
            self.buffer.pop();
            self.pending_cr = true;
        }
        let mut from = 0;
        while let Some(at) = memchr::memchr(b'\r', &self.buffer[from..]) {
            let i = from + at;
            if self.buffer.get(i + 1) != Some(&b'\n') {
                self.buffer[i] = b'\n';
            }
            from = i + 1;
        }
        let empty_line = |i: usize, buffer: &[u8], last: u8| {
            if i == 0 {
                last == b'\n'
            } else {
                buffer[i - 1] == b'\n'
            }
        };
        if memchr::memchr_iter(b'\n', &self.buffer).any(|i| empty_line(i, &self.buffer, self.last))
        {
            let mut fixed = Vec::with_capacity(self.buffer.len() + 64);
            let mut from = 0;
            for i in memchr::memchr_iter(b'\n', &self.buffer) {
                if empty_line(i, &self.buffer, self.last) {
                    fixed.extend_from_slice(&self.buffer[from..i]);
                    fixed.push(b' ');
                    from = i;
                }
            }
            fixed.extend_from_slice(&self.buffer[from..]);
            self.buffer = fixed;
        }
        self.last = *self.buffer.last().unwrap_or(&self.last);
        Ok(true)
    }
}

impl<R: Read> Read for BlankLineKeeper<R> {
    fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
        if self.delivered.saturating_sub(self.row_start.get()) > limits::MAX_ROW_BYTES {
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                RowTooLong,
            ));
        }
        // A chunk may come back empty (a lone CR held back), so fill until there is data.
        while self.start >= self.buffer.len() {
            if !self.fill()? {
                return Ok(0);
            }
        }
        let available = &self.buffer[self.start..];
        let n = available.len().min(out.len());
        out[..n].copy_from_slice(&available[..n]);
        self.start += n;
        self.delivered += n as u64;
        Ok(n)
    }
}

/// What is trimmed from a cell: white space, and the byte-order mark a file pasted onto another
/// leaves at the start of a line.
fn is_trimmed(c: char) -> bool {
    c.is_whitespace() || c == '\u{feff}'
}

fn is_blank(record: &csv::ByteRecord) -> bool {
    record.iter().all(|f| f.iter().all(u8::is_ascii_whitespace))
}

/// A cell of a row already known to be UTF-8, or decoded on its own.
#[allow(clippy::too_many_arguments)]
fn decode_cell<'a>(
    text: Option<&'a csv::StringRecord>,
    index: usize,
    library: &mut Library,
    file: u32,
    warned: &mut bool,
    line: u32,
    column: &str,
    raw: &'a [u8],
) -> Cow<'a, str> {
    match text.and_then(|t| t.get(index)) {
        Some(cell) => Cow::Borrowed(cell),
        None => decode(library, file, warned, line, column, raw),
    }
}

/// A cell without surrounding white space or a stray BOM; the common case (nothing to trim)
/// costs two byte tests.
fn trim_cell(cell: &str) -> &str {
    let bytes = cell.as_bytes();
    let plain = |b: u8| b.is_ascii_graphic();
    match (bytes.first(), bytes.last()) {
        (Some(&first), Some(&last)) if plain(first) && plain(last) => cell,
        _ => cell.trim_matches(is_trimmed),
    }
}

/// Decodes a cell: UTF-8 as is, anything else as Windows-1252 (the usual spreadsheet export).
fn decode<'a>(
    library: &mut Library,
    file: u32,
    warned: &mut bool,
    line: u32,
    column: &str,
    raw: &'a [u8],
) -> Cow<'a, str> {
    match std::str::from_utf8(raw) {
        Ok(text) => Cow::Borrowed(text),
        Err(_) => {
            let (text, _, _) = encoding_rs::WINDOWS_1252.decode(raw);
            if !*warned {
                *warned = true;
                warn(
                    library,
                    file,
                    line,
                    column,
                    &text,
                    "text is not UTF-8; read as Windows-1252 from here on (save the file as UTF-8 to be sure)"
                        .to_string(),
                );
            }
            Cow::Owned(text.into_owned())
        }
    }
}

fn plan_header(
    library: &mut Library,
    file: u32,
    record: &csv::ByteRecord,
    delimiter: u8,
) -> Result<FileState, ReadError> {
    if record.len() > limits::MAX_COLUMNS {
        return Err(ReadError::TooManyColumns(record.len()));
    }
    let mut state = FileState {
        file,
        header: Vec::with_capacity(record.len()),
        plans: Vec::with_capacity(record.len()),
        part_column: usize::MAX,
        kind_column: usize::MAX,
        options: ParseOptions {
            decimal_comma: delimiter == b';',
        },
        semicolon: delimiter == b';',
        delimiter,
        warned_encoding: false,
        header_keys: Vec::new(),
    };
    let mut seen: Vec<(Field, usize)> = Vec::new();
    for (index, raw) in record.iter().enumerate() {
        let text = decode(library, file, &mut state.warned_encoding, 1, "", raw)
            .trim()
            .to_string();
        let text = text.trim_start_matches('\u{feff}').trim().to_string();
        // Shortened: the name is copied into every diagnostic of the column.
        let display = if text.is_empty() {
            format!("column {}", index + 1)
        } else {
            shorten(&text)
        };
        let name = normalise_header(&text);
        state.header_keys.push(name.key.clone());
        let plan = match name.field() {
            Some((field, unit)) => {
                if let Some(&(_, first)) = seen.iter().find(|(f, _)| *f == field) {
                    warn(
                        library,
                        file,
                        1,
                        &display,
                        &display,
                        format!(
                            "column {} repeats `{}` (column {}): the first is used, this one is kept as an extra column",
                            index + 1,
                            field.name(),
                            first + 1
                        ),
                    );
                    Plan::Extra(library.extra_column_id(&display))
                } else {
                    seen.push((field, index));
                    plan_known(library, file, field.spec(), &display, unit)
                }
            }
            None => Plan::Extra(library.extra_column_id(&display)),
        };
        if let Plan::Known { spec, .. } = &plan {
            match spec.field {
                Field::Part => state.part_column = index,
                Field::Kind => state.kind_column = index,
                _ => {}
            }
        }
        state.header.push(display);
        state.plans.push(plan);
    }
    let found = || shorten(&state.header.join(", "));
    if state.part_column == usize::MAX {
        return Err(ReadError::MissingColumn {
            column: "part",
            found: found(),
        });
    }
    if state.kind_column == usize::MAX {
        return Err(ReadError::MissingColumn {
            column: "kind",
            found: found(),
        });
    }
    Ok(state)
}

fn plan_known(
    library: &mut Library,
    file: u32,
    spec: &'static FieldSpec,
    display: &str,
    unit: Option<&str>,
) -> Plan {
    let (Some(dim), Some(unit)) = (spec.dim, unit) else {
        return Plan::Known {
            spec,
            scale: spec.bare_scale,
        };
    };
    if dim == Dim::Number {
        return Plan::Known {
            spec,
            scale: spec.bare_scale,
        };
    }
    match header_scale(unit, dim) {
        Ok(scale) => Plan::Known { spec, scale },
        Err(e) => {
            warn(
                library,
                file,
                1,
                display,
                display,
                format!(
                    "{} (`{}` holds {}): the column is kept as an extra column, not read as `{}`",
                    e.message,
                    spec.name,
                    dim.noun(),
                    spec.name
                ),
            );
            Plan::Extra(library.extra_column_id(display))
        }
    }
}

fn read_row(
    library: &mut Library,
    state: &mut FileState,
    record: &csv::ByteRecord,
    text: Option<&csv::StringRecord>,
) {
    let line = record.position().map_or(0, |p| p.line() as u32);
    let columns = state.header.len();
    // Whole-row tests first: most rows hold no line break and are far shorter than the cell
    // limit, so the per-cell scans below are skipped for them.
    let row_bytes = record.as_slice();
    let spans_lines = memchr::memchr(b'\n', row_bytes).is_some();
    let long = row_bytes.len() > limits::MAX_CELL_BYTES;
    if let Some((index, swallowed)) = spans_lines
        .then(|| swallowed_rows(record, state.delimiter, columns))
        .flatten()
    {
        let column = state.header.get(index).cloned().unwrap_or_default();
        let text =
            String::from_utf8_lossy(&record[index][..record[index].len().min(200)]).into_owned();
        library.rows_rejected += 1;
        reject(
            library,
            state,
            line,
            &column,
            &text,
            format!(
                "a quote opened in this cell is not closed where the row ends: the cell runs over {swallowed} more lines that look like rows; close the quote"
            ),
        );
        return;
    }
    if record.len() != columns {
        // A cell holding a line end here is most likely a quote left open: name its column.
        let spans = record.iter().position(|f| f.contains(&b'\n'));
        let (column, hint) = match spans {
            Some(index) => (
                state.header.get(index).cloned().unwrap_or_default(),
                "; a cell spans lines: a quote may be left open",
            ),
            None => (String::new(), ""),
        };
        let preview: Vec<String> = record
            .iter()
            .take(3)
            .map(|f| String::from_utf8_lossy(&f[..f.len().min(200)]).into_owned())
            .collect();
        let message = format!(
            "the row has {} field{}, the header has {columns}{hint}",
            record.len(),
            if record.len() == 1 { "" } else { "s" }
        );
        library.rows_rejected += 1;
        reject(library, state, line, &column, &preview.join(","), message);
        return;
    }
    if let Some((index, raw)) = long
        .then(|| {
            record
                .iter()
                .enumerate()
                .find(|(_, f)| f.len() > limits::MAX_CELL_BYTES)
        })
        .flatten()
    {
        let column = state.header[index].clone();
        let message = format!(
            "the cell holds {} bytes, over the limit of {} KiB",
            raw.len(),
            limits::MAX_CELL_BYTES / 1024
        );
        let text = String::from_utf8_lossy(&raw[..raw.len().min(200)]).into_owned();
        library.rows_rejected += 1;
        reject(library, state, line, &column, &text, message);
        return;
    }
    if is_repeated_header(state, record) {
        warn(
            library,
            state.file,
            line,
            "",
            "",
            "the header is repeated here; the row is skipped".to_string(),
        );
        library.rows -= 1;
        return;
    }

    let mut problems: Vec<(usize, String, String)> = Vec::new();
    let file = state.file;
    let number = decode_cell(
        text,
        state.part_column,
        library,
        file,
        &mut state.warned_encoding,
        line,
        "part",
        &record[state.part_column],
    )
    .trim_matches(is_trimmed)
    .to_string();
    let kind_cell = decode_cell(
        text,
        state.kind_column,
        library,
        file,
        &mut state.warned_encoding,
        line,
        "kind",
        &record[state.kind_column],
    );
    let kind_text = kind_cell.trim_matches(is_trimmed);
    if number.is_empty() {
        problems.push((
            state.part_column,
            String::new(),
            "the part number is empty".to_string(),
        ));
    }
    let kind = Kind::from_text(kind_text);
    if kind.is_none() {
        let message = if kind_text.is_empty() {
            "the kind is empty; give one of npn, pnp, nmos, pmos, diode, schottky, zener, relay, photocell".to_string()
        } else {
            format!(
                "unknown kind \"{kind_text}\"; expected one of npn, pnp, nmos, pmos, diode, schottky, zener, relay, photocell"
            )
        };
        problems.push((state.kind_column, kind_text.to_string(), message));
    }
    let kind = kind.unwrap_or(Kind::Npn);
    let mut part = Part {
        number: number.into(),
        kind,
        package: Sym(0),
        pinout: Sym(0),
        maker: Sym(0),
        price: Rating::MISSING,
        stock: None,
        status: Status::Unknown,
        rohs: None,
        notes: Note::default(),
        tags: Text::default(),
        ratings: Ratings::empty(kind),
        extra: Extras::default(),
        source: Source {
            file: state.file,
            line,
        },
    };
    let mut extra: Vec<(u32, Box<str>)> = Vec::new();
    let mut cell_warnings: Vec<(usize, String, String)> = Vec::new();

    for index in 0..columns {
        if index == state.part_column || index == state.kind_column {
            continue;
        }
        let raw = &record[index];
        if raw.iter().all(u8::is_ascii_whitespace) {
            continue;
        }
        let cell = decode_cell(
            text,
            index,
            library,
            file,
            &mut state.warned_encoding,
            line,
            &state.header[index],
            raw,
        );
        let cell = trim_cell(&cell);
        match state.plans[index] {
            Plan::Extra(id) => extra.push((id, cell.into())),
            Plan::Known { spec, scale } => {
                if let Err(message) =
                    apply(library, &mut part, spec, scale, cell, state, &mut |m| {
                        cell_warnings.push((index, cell.to_string(), m))
                    })
                {
                    problems.push((index, cell.to_string(), message));
                }
            }
        }
    }
    if !problems.is_empty() {
        library.rows_rejected += 1;
        for (index, text, message) in problems {
            let column = state.header[index].clone();
            reject(library, state, line, &column, &text, message);
        }
        return;
    }
    check_plausible(&mut part, &mut |field, message| {
        let index = state
            .plans
            .iter()
            .position(|p| matches!(p, Plan::Known { spec, .. } if spec.field == field))
            .unwrap_or(0);
        cell_warnings.push((index, String::new(), message));
    });
    part.extra = extra.into();
    let number = part.number.clone();
    match library.push_part(part) {
        Ok(()) => {
            for (index, text, message) in cell_warnings {
                let column = state.header.get(index).cloned().unwrap_or_default();
                warn(library, state.file, line, &column, &text, message);
            }
        }
        Err(first) => {
            let at = format!("{}:{}", library.file_name(first), first.line);
            let column = state.header[state.part_column].clone();
            library.rows_rejected += 1;
            reject(
                library,
                state,
                line,
                &column,
                &number,
                format!("the part number is already used at {at}; part numbers must be unique"),
            );
        }
    }
}

/// A cell that spans lines, some of which hold as many delimiters as a whole row: the mark of
/// a quote left open. Gives the cell's index and how many row-like lines it holds.
fn swallowed_rows(
    record: &csv::ByteRecord,
    delimiter: u8,
    columns: usize,
) -> Option<(usize, usize)> {
    let needed = columns.saturating_sub(1).max(1);
    record.iter().enumerate().find_map(|(index, cell)| {
        if !cell.contains(&b'\n') {
            return None;
        }
        let rows = cell
            .split(|&b| b == b'\n')
            .skip(1)
            .filter(|line| line.iter().filter(|&&b| b == delimiter).count() >= needed)
            .count();
        (rows > 0).then_some((index, rows))
    })
}

fn is_repeated_header(state: &FileState, record: &csv::ByteRecord) -> bool {
    // Cheap test first, without allocating: the part cell must repeat the header's text (after
    // the byte-order mark of a file pasted onto this one).
    let cell = record[state.part_column].trim_ascii();
    let cell = cell
        .strip_prefix(b"\xEF\xBB\xBF".as_slice())
        .unwrap_or(cell);
    if !cell
        .trim_ascii()
        .eq_ignore_ascii_case(state.header[state.part_column].as_bytes())
    {
        return false;
    }
    record
        .iter()
        .zip(&state.header_keys)
        .all(|(cell, key)| normalise_header(&String::from_utf8_lossy(cell)).key == *key)
}

/// Reads one known cell into the part. A returned error rejects the row; `warn_cell` records a
/// value that reads but is dropped or doubtful.
fn apply(
    library: &mut Library,
    part: &mut Part,
    spec: &'static FieldSpec,
    scale: f64,
    cell: &str,
    state: &FileState,
    warn_cell: &mut dyn FnMut(String),
) -> Result<(), String> {
    match spec.field {
        Field::Package => part.package = library.intern(cell),
        Field::Pinout => part.pinout = library.intern(&cell.to_ascii_uppercase()),
        Field::Maker => part.maker = library.intern(cell),
        Field::Notes => part.notes = cell.into(),
        Field::Tags => part.tags = cell.into(),
        Field::Status => {
            part.status = Status::from_text(cell).ok_or_else(|| {
                format!("\"{cell}\" is not a status; use active, nrnd or obsolete")
            })?;
        }
        Field::Rohs => {
            part.rohs =
                Some(read_bool(cell).ok_or_else(|| format!("\"{cell}\" is not yes or no"))?);
        }
        Field::Stock => {
            let stock = read_stock(cell, state.semicolon)
                .ok_or_else(|| format!("\"{cell}\" is not a whole number of units"))?;
            part.stock = Some(u32::try_from(stock).unwrap_or_else(|_| {
                warn_cell(format!(
                    "a stock of {stock} units is read as {}, the most loadfit holds",
                    u32::MAX
                ));
                u32::MAX
            }));
        }
        Field::Price => {
            let value = read_price(cell, state.options).ok_or_else(|| {
                format!("\"{cell}\" is not a price; write a plain number such as 0.12")
            })?;
            if value < 0.0 {
                warn_cell(format!("price \"{cell}\" is negative: ignored"));
            } else {
                part.price = Rating::of(value);
            }
        }
        Field::ContactForm => {
            if part.kind == Kind::Relay
                && let super::part::Ratings::Relay(relay) = &mut part.ratings
            {
                relay.contact_form = Some(ContactForm::from_text(cell).ok_or_else(|| {
                    format!("\"{cell}\" is not a contact form; use 1A, 1B, 1C, 2C ...")
                })?);
            }
        }
        Field::Part | Field::Kind => {}
        field => {
            let Some(slot) = field.slot(&mut part.ratings) else {
                // A rating of another kind (a mixed file): nothing to keep for this row.
                return Ok(());
            };
            let value = read_value(cell, spec, scale, state.options)?;
            if value < 0.0 {
                warn_cell(format!(
                    "{} \"{cell}\" is negative; ratings are magnitudes: ignored (write it without the sign)",
                    spec.name
                ));
            } else {
                *slot = Rating::of(value);
            }
        }
    }
    Ok(())
}

/// Reads a rating cell: a bare number takes the column's scale, a number with its own unit or
/// prefix keeps it (the cell's unit wins over the header's).
fn read_value(
    cell: &str,
    spec: &FieldSpec,
    scale: f64,
    options: ParseOptions,
) -> Result<f64, String> {
    let dim = spec.dim.unwrap_or(Dim::Number);
    let bare = cell
        .bytes()
        .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b',' | b'+' | b'-' | b'e' | b'E'));
    // A plain decimal number (most cells of a large export) needs no unit parsing.
    if bare
        && !cell.contains(',')
        && cell.as_bytes().first().is_some_and(u8::is_ascii_digit)
        && let Ok(number) = cell.parse::<f64>()
    {
        let value = number * scale;
        if !value.is_finite() {
            return Err(format!("\"{cell}\" is out of range"));
        }
        return Ok(value);
    }
    let quantity = units::parse_with(cell, dim, options).map_err(|e| e.to_string())?;
    if bare {
        let value = quantity.value * scale;
        if !value.is_finite() {
            return Err(format!("\"{cell}\" is out of range"));
        }
        Ok(value)
    } else {
        Ok(quantity.value)
    }
}

fn read_bool(cell: &str) -> Option<bool> {
    match cell.to_ascii_lowercase().as_str() {
        "yes" | "y" | "true" | "1" | "compliant" | "rohs" => Some(true),
        "no" | "n" | "false" | "0" | "non-compliant" | "noncompliant" => Some(false),
        _ => None,
    }
}

/// Reads a stock count, allowing thousands separators (`,` or `_` or spaces; `.` in
/// `;`-delimited files, where the comma is the decimal mark).
fn read_stock(cell: &str, semicolon: bool) -> Option<u64> {
    if !cell.is_empty() && cell.bytes().all(|b| b.is_ascii_digit()) {
        // Most cells are plain digits: no copy.
        return cell.parse::<u64>().ok();
    }
    let digits: String = cell
        .chars()
        .filter(|&c| {
            !(c == ' ' || c == '_' || c == '\u{a0}' || c == '\u{202f}' || c == '\'')
                && (c != ',' || semicolon)
                && (c != '.' || !semicolon)
        })
        .collect();
    digits.parse::<u64>().ok()
}

/// Reads a price, allowing a leading or trailing currency sign.
fn read_price(cell: &str, options: ParseOptions) -> Option<f64> {
    let trimmed = cell
        .trim_start_matches(['$', '€', '£', '¥'])
        .trim_end_matches(['$', '€', '£', '¥'])
        .trim();
    units::parse_with(trimmed, Dim::Number, options)
        .ok()
        .map(|q| q.value)
}

/// Flags values that read but are implausible. Returns nothing; warnings go to `warn`.
fn check_plausible(part: &mut Part, warn: &mut dyn FnMut(Field, String)) {
    if let Ratings::Bjt(b) = &mut part.ratings {
        if let Some(hfe) = b.hfe_min.get()
            && hfe > 5000.0
        {
            warn(
                Field::HfeMin,
                format!("hFE of {hfe} is implausible (above 5000): check the value"),
            );
        }
        if let (Some(sat), Some(vceo)) = (b.vce_sat.get(), b.vceo.get())
            && sat >= vceo
        {
            warn(
                Field::VceSat,
                format!(
                    "VCE(sat) {} is not below VCEO {}: one of them is wrong",
                    units::format_eng(sat, Dim::Volt),
                    units::format_eng(vceo, Dim::Volt)
                ),
            );
        }
    }
    if let Ratings::Relay(r) = &part.ratings
        && let (Some(op), Some(coil)) = (r.must_operate_v.get(), r.coil_v.get())
        && op > coil
    {
        warn(
            Field::MustOperateV,
            format!(
                "must-operate {} is above the rated coil voltage {}",
                units::format_eng(op, Dim::Volt),
                units::format_eng(coil, Dim::Volt)
            ),
        );
    }
}

fn store(library: &mut Library, file: u32, rejected: bool, diagnostic: Diagnostic) {
    let slot = usize::from(rejected);
    let Some(counts) = library.diagnostic_counts.get_mut(file as usize) else {
        return;
    };
    counts[slot] += 1;
    if counts[slot] > limits::MAX_DIAGNOSTICS_PER_FILE {
        return;
    }
    if rejected {
        library.rejected.push(diagnostic);
    } else {
        library.warnings.push(diagnostic);
    }
}

/// A message cut to [`limits::MAX_MESSAGE_CHARS`]: messages quote the cell, which may be long.
fn cut(mut message: String) -> String {
    if let Some((at, _)) = message.char_indices().nth(limits::MAX_MESSAGE_CHARS) {
        message.truncate(at);
        message.push('…');
    }
    message
}

fn warn(library: &mut Library, file: u32, line: u32, column: &str, text: &str, message: String) {
    let diagnostic = Diagnostic {
        file,
        line: line.max(1),
        column: column.to_string(),
        text: shorten(text),
        message: cut(message),
    };
    store(library, file, false, diagnostic);
}

/// A rejection that ends the reading of the file: kept even past
/// [`limits::MAX_DIAGNOSTICS_PER_FILE`], since it says why the rest of the file is missing.
fn reject_last(library: &mut Library, file: u32, line: u32, message: String) {
    if let Some(counts) = library.diagnostic_counts.get_mut(file as usize) {
        counts[1] += 1;
    }
    library.rejected.push(Diagnostic {
        file,
        line: line.max(1),
        column: String::new(),
        text: String::new(),
        message: cut(message),
    });
}

fn reject(
    library: &mut Library,
    state: &mut FileState,
    line: u32,
    column: &str,
    text: &str,
    message: String,
) {
    let diagnostic = Diagnostic {
        file: state.file,
        line: line.max(1),
        column: column.to_string(),
        text: shorten(text),
        message: cut(message),
    };
    store(library, state.file, true, diagnostic);
}
