//! Shared text-file helpers for the input readers (first stage of the data
//! flow): opening a file with its leading UTF-8 BOM skipped, reading physical
//! lines with CRLF or LF ends, a CSV reader that locates columns by header
//! name and reports physical line numbers, and the value checks (ids,
//! language codes, quoting of found values) every reader shares.
//!
//! Files are streamed: lines and CSV records are read one at a time, so a
//! corpus never has to fit in memory twice.
//!
//! Line numbers are physical and 1-based (formats.md); a CSV record whose
//! quoted field spans lines is reported at the line where the record starts.
//! `csv::Position::line` of a record is not that line when blank lines come
//! before the record: csv 1.4 stamps a record with the position right after
//! the previous one, before the blank lines it then skips (measured: in
//! `"a,b\n\n\nx,y\n"` it puts `x,y` on line 2, not 4). So the start line is
//! derived from the reader's position *after* the record, which counts every
//! `\n` consumed, minus the newlines inside the record's fields, minus one
//! when the terminator just consumed was `\n` ([`LineIndex`] remembers where
//! the `\n` bytes are to tell).
//!
//! A quoted field may hold line ends (a post text with a newline), so an
//! opening quote that is never closed makes the CSV parser read the rest of
//! the file as that one field and return it without complaint (csv 1.4 ends
//! the record at end of file). [`LineIndex`] therefore follows the parser's
//! quoting rules byte by byte ([`QuoteState`]); a record still inside a quoted
//! field at end of file is an error at the line where the record starts.
//!
//! Files saved by spreadsheets: a first line `sep=;` (the separator
//! declaration some spreadsheet programs write and read) is accepted, and
//! the CSV is then read with that separator (`,` `;` tab or `|`); line
//! numbers stay physical. A header without a comma but with semicolons, tabs
//! or bars gets a hint to save the file with commas or to declare its
//! separator that way. A file in UTF-16 (a byte order mark, or the zero
//! bytes ASCII text has in UTF-16) is refused at once with what to do, and
//! bytes that are not UTF-8 get a hint that the file may be Latin-1.

use std::collections::VecDeque;
use std::fs::File;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::str::Utf8Error;

use crate::error::{Error, Problems, Result};
use crate::input::LangCode;

/// The UTF-8 byte order mark, accepted (and skipped) at the start of a file.
const BOM: &[u8] = b"\xEF\xBB\xBF";

/// What to do about bytes that are not UTF-8 (text saved in a legacy
/// encoding is the usual cause).
const NOT_UTF8_HINT: &str = "a Latin-1 or Windows-1252 file? save it as UTF-8";

/// Separators a `sep=` first line may declare.
const DECLARABLE_SEPARATORS: [u8; 4] = [b',', b';', b'\t', b'|'];

/// Longest stretch of a found value quoted in a message; longer values are
/// cut with `…` so a bad post does not flood the terminal.
const MAX_QUOTED_CHARS: usize = 60;

/// Open `path` for buffered reading, with a leading UTF-8 BOM already
/// skipped; a UTF-16 file is an error that says what to do.
pub(super) fn open(path: &Path) -> Result<BufReader<File>> {
    let file = File::open(path).map_err(|e| Error::io(path, e))?;
    let mut reader = BufReader::new(file);
    // fill_buf returns at least the first bytes of a non-empty file; the
    // buffer (8 KiB) is always larger than the 3-byte mark.
    let head = reader.fill_buf().map_err(|e| Error::io(path, e))?;
    if let Some(found) = utf16_sign(head) {
        return Err(Error::in_file(
            path,
            format!(
                "expected UTF-8 text, found UTF-16 ({found}): save the file as UTF-8 (in a \
                 spreadsheet: \"CSV UTF-8\"; in an editor: the encoding UTF-8)"
            ),
        ));
    }
    let starts_with_bom = head.starts_with(BOM);
    if starts_with_bom {
        reader.consume(BOM.len());
    }
    Ok(reader)
}

/// What shows that `head`, the start of a file, is UTF-16: its byte order
/// mark, or the zero byte every ASCII character has in UTF-16 (two of the
/// first four bytes, alternating). `None` for anything else.
fn utf16_sign(head: &[u8]) -> Option<&'static str> {
    match head {
        [0xFF, 0xFE, ..] => Some("the byte order mark FF FE"),
        [0xFE, 0xFF, ..] => Some("the byte order mark FE FF"),
        [a, 0, b, 0, ..] | [0, a, 0, b, ..] if *a != 0 && *b != 0 => {
            Some("a zero byte beside every character")
        }
        _ => None,
    }
}

/// The separator a spreadsheet's first line `sep=X` declares (`sep=` in any
/// case, then one separator byte); `None` when `line` (without its `\n`) is
/// not such a line, `Some(Err(message))` when it declares an unusable one.
pub fn declared_separator(line: &[u8]) -> Option<std::result::Result<u8, String>> {
    let (prefix, rest) = (line.get(..4)?, line.get(4..)?);
    if !prefix.eq_ignore_ascii_case(b"sep=") {
        return None;
    }
    let rest = rest.strip_suffix(b"\r").unwrap_or(rest);
    Some(match rest {
        [b] if DECLARABLE_SEPARATORS.contains(b) => Ok(*b),
        _ => Err(format!(
            "expected a separator declaration \"sep=,\", \"sep=;\", \"sep=|\" or \"sep=\" and a \
             tab, found {}",
            quoted(&String::from_utf8_lossy(line))
        )),
    })
}

/// A hint for a header that would have had its columns with another
/// separator: it holds no comma but semicolons, tabs or bars. `None` when
/// it does not look like that.
pub(super) fn separator_hint(header: &str) -> Option<String> {
    if header.contains(',') {
        return None;
    }
    let (count, name, declaration) = [
        (';', "semicolon", "\"sep=;\""),
        ('\t', "tab", "\"sep=\" and a tab"),
        ('|', "bar", "\"sep=|\""),
    ]
    .into_iter()
    .map(|(c, name, declaration)| (header.matches(c).count(), name, declaration))
    .max_by_key(|(n, _, _)| *n)?;
    (count > 0).then(|| {
        format!(
            "the header has no comma but {}: save the file as comma-separated CSV, or make its \
             first line {declaration} to declare the separator",
            crate::plural::counted(count, name, &format!("{name}s"))
        )
    })
}

/// One physical line: its 1-based number and its text without the line end,
/// or the UTF-8 error when the line is not valid UTF-8.
pub(super) struct Line<'a> {
    /// Physical 1-based line number.
    pub number: u64,
    /// The line without `\n` / `\r\n`.
    pub text: std::result::Result<&'a str, Utf8Error>,
}

/// Reads a file line by line (LF or CRLF ends), reusing one buffer.
pub(super) struct Lines {
    path: PathBuf,
    reader: BufReader<File>,
    buf: Vec<u8>,
    number: u64,
    bytes: u64,
}

impl Lines {
    /// Open `path` (BOM skipped) for reading lines.
    pub fn open(path: &Path) -> Result<Lines> {
        Ok(Lines {
            path: path.to_path_buf(),
            reader: open(path)?,
            buf: Vec::new(),
            number: 0,
            bytes: 0,
        })
    }

    /// Bytes read so far (for progress).
    pub fn bytes_read(&self) -> u64 {
        self.bytes
    }

    /// The next line, or `None` at the end of the file.
    pub fn next_line(&mut self) -> Result<Option<Line<'_>>> {
        self.buf.clear();
        let n =
            self.reader.read_until(b'\n', &mut self.buf).map_err(|e| Error::io(&self.path, e))?;
        if n == 0 {
            return Ok(None);
        }
        self.number += 1;
        self.bytes += n as u64;
        let mut bytes: &[u8] = &self.buf;
        if let Some(rest) = bytes.strip_suffix(b"\n") {
            bytes = rest;
        }
        if let Some(rest) = bytes.strip_suffix(b"\r") {
            bytes = rest;
        }
        Ok(Some(Line { number: self.number, text: std::str::from_utf8(bytes) }))
    }
}

/// The first line of `path` that holds something other than whitespace, as
/// an owned string with its number; `None` when the file is empty or blank.
/// Readers that choose a layout by content call this before reading for real.
pub(super) fn first_non_blank_line(
    path: &Path,
) -> Result<Option<(u64, std::result::Result<String, Utf8Error>)>> {
    let mut lines = Lines::open(path)?;
    while let Some(line) = lines.next_line()? {
        match line.text {
            Ok(text) if text.trim().is_empty() => continue,
            Ok(text) => return Ok(Some((line.number, Ok(text.to_string())))),
            Err(e) => return Ok(Some((line.number, Err(e)))),
        }
    }
    Ok(None)
}

/// True when a comma-separated field of `line` is `query_id`: how the
/// readers that accept a whitespace-separated layout too (judgments, runs)
/// tell a CSV header.
pub(super) fn names_query_id(line: &str) -> bool {
    line.split(',').any(|f| f.trim().trim_matches('"').trim() == "query_id")
}

/// Fields separated by runs of spaces or tabs (formats.md's column layouts).
pub(super) fn split_fields(line: &str) -> impl Iterator<Item = &str> {
    line.split([' ', '\t']).filter(|f| !f.is_empty())
}

/// The layout of a file that may be CSV or whitespace-separated columns.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Layout {
    /// CSV with a header.
    Csv,
    /// Whitespace-separated columns, no header.
    Columns,
}

/// Choose a layout by content (formats.md, judgments): a first non-blank
/// line naming `query_id` (or declaring a separator) is CSV; otherwise
/// `columns` whitespace-separated fields on it mean the column layout;
/// anything else is one error, `expected` (what the file must start with)
/// and what was found.
pub(super) fn choose_layout(path: &Path, columns: usize, expected: &str) -> Result<Layout> {
    let Some((number, first)) = first_non_blank_line(path)? else {
        return Err(Error::in_file(path, format!("{expected}, found an empty file")));
    };
    let first = first.map_err(|e| Error::at_line(path, number, utf8_message(e, "the line")))?;
    if names_query_id(&first) || declared_separator(first.as_bytes()).is_some() {
        Ok(Layout::Csv)
    } else if split_fields(&first).count() == columns {
        Ok(Layout::Columns)
    } else {
        let hint = separator_hint(&first)
            .filter(|_| first.contains("query_id"))
            .map(|h| format!("; {h}"))
            .unwrap_or_default();
        Err(Error::at_line(path, number, format!("{expected}, found {}{hint}", quoted(&first))))
    }
}

/// Read a file in a whitespace-separated column layout: blank lines are
/// skipped; `row` gets each other line's number and its fields, or the
/// problem with it (not UTF-8, or another number of fields than `names`
/// lists, naming the layout).
pub(super) fn read_columns(
    path: &Path,
    names: &[&str],
    mut row: impl FnMut(u64, std::result::Result<&[&str], String>),
) -> Result<()> {
    let mut lines = Lines::open(path)?;
    while let Some(line) = lines.next_line()? {
        let text = match line.text {
            Ok(text) => text,
            Err(e) => {
                row(line.number, Err(utf8_message(e, "the line")));
                continue;
            }
        };
        let fields: Vec<&str> = split_fields(text).collect();
        if fields.is_empty() {
            continue;
        }
        if fields.len() == names.len() {
            row(line.number, Ok(&fields));
        } else {
            let message = format!(
                "expected {} whitespace-separated fields ({}), found {}: {}",
                names.len(),
                names.join(" "),
                fields.len(),
                quoted(text)
            );
            row(line.number, Err(message));
        }
    }
    Ok(())
}

/// The first byte of `path` (after a BOM) that is not ASCII whitespace;
/// `None` when the file is empty or blank. Looked at before any decoding, so
/// a layout can be chosen even when the first line is not UTF-8.
pub(super) fn first_non_blank_byte(path: &Path) -> Result<Option<u8>> {
    let mut reader = open(path)?;
    loop {
        let buf = reader.fill_buf().map_err(|e| Error::io(path, e))?;
        if buf.is_empty() {
            return Ok(None);
        }
        if let Some(&b) = buf.iter().find(|b| !b.is_ascii_whitespace()) {
            return Ok(Some(b));
        }
        let n = buf.len();
        reader.consume(n);
    }
}

/// The message for bytes that are not UTF-8, naming the first bad byte
/// (1-based) within `what` ("the line", "the field"), with what to do.
pub fn utf8_message(err: Utf8Error, what: &str) -> String {
    invalid_utf8_at(err.valid_up_to(), what)
}

/// [`utf8_message`] for the first bad byte at the 0-based offset `at`.
fn invalid_utf8_at(at: usize, what: &str) -> String {
    format!(
        "expected UTF-8 text, found an invalid byte sequence at byte {} of {what} \
         ({NOT_UTF8_HINT})",
        at + 1
    )
}

/// A found value quoted for a message (`"deu-CH"`), cut after
/// [`MAX_QUOTED_CHARS`] characters.
pub(super) fn quoted(value: &str) -> String {
    match value.char_indices().nth(MAX_QUOTED_CHARS) {
        Some((cut, _)) => format!("{:?}…", &value[..cut]),
        None => format!("{value:?}"),
    }
}

/// The message prefix naming a CSV column or a JSON field.
pub(super) fn in_column(column: &str, message: &str) -> String {
    format!("column {column:?}: {message}")
}

/// Check an id value: surrounding whitespace is removed (ids are compared as
/// strings across files, and a stray space would silently break the match);
/// an empty id is an error.
pub(super) fn check_id(raw: &str) -> std::result::Result<&str, String> {
    let id = raw.trim();
    if id.is_empty() {
        Err(format!("expected a non-empty id, found {}", quoted(raw)))
    } else {
        Ok(id)
    }
}

/// Check an optional language value: empty (after trimming) means absent,
/// anything else must be an ISO 639-1 code.
pub(super) fn check_lang(raw: &str) -> std::result::Result<Option<LangCode>, String> {
    let value = raw.trim();
    if value.is_empty() {
        return Ok(None);
    }
    LangCode::parse(value).map(Some).ok_or_else(|| LangCode::error_message(value))
}

/// Where the CSV parser stands with respect to quoting, after a byte. These
/// are the parser's own states (csv-core's defaults: `,` (or the declared
/// separator) separates fields,
/// `\r` or `\n` ends a record, `"` quotes, `""` is a quote inside quotes, no
/// escape byte, no comments) folded to the four that decide what a `"` means.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum QuoteState {
    /// At the start of a field: a `"` opens a quoted field.
    FieldStart,
    /// Inside an unquoted field: a `"` is an ordinary byte.
    Unquoted,
    /// Inside a quoted field: everything up to the next `"` is text.
    Quoted,
    /// Just after a `"` inside a quoted field: a second `"` is a literal
    /// quote, anything else closes the field.
    QuoteInQuoted,
}

impl QuoteState {
    /// The state after `byte`, fields separated by `separator`.
    fn next(self, byte: u8, separator: u8) -> QuoteState {
        use QuoteState::*;
        match (self, byte) {
            (Quoted, b'"') => QuoteInQuoted,
            (Quoted, _) | (QuoteInQuoted, b'"') => Quoted,
            (FieldStart, b'"') => Quoted,
            (_, b'\r' | b'\n') => FieldStart,
            (_, b) if b == separator => FieldStart,
            (FieldStart | Unquoted | QuoteInQuoted, _) => Unquoted,
        }
    }
}

/// A quoted field opened at `offset` (a byte offset after the BOM) on
/// physical line `line` and not closed before the end of the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct UnclosedQuote {
    offset: u64,
    line: u64,
}

/// A reader that remembers the byte offsets of the `\n` bytes it has passed
/// on but the CSV parser has not yet moved beyond (a buffer's worth at most),
/// so [`CsvTable`] can tell whether a record ended with `\n`; and that
/// follows the parser's quoting to tell a quoted field left open at end of
/// file (module docs).
struct LineIndex<R> {
    inner: R,
    offset: u64,
    newlines: VecDeque<u64>,
    /// `\n` bytes passed on so far (the physical line is one more).
    lines_before: u64,
    quote: QuoteState,
    /// Where the quoted field the parser is in (or last was in) opened.
    opened: UnclosedQuote,
    at_end: bool,
    separator: u8,
}

impl<R> LineIndex<R> {
    /// Follow `inner`, whose first byte is on physical line `lines_before + 1`.
    fn new(inner: R, lines_before: u64, separator: u8) -> LineIndex<R> {
        LineIndex {
            inner,
            offset: 0,
            newlines: VecDeque::new(),
            lines_before,
            quote: QuoteState::FieldStart,
            opened: UnclosedQuote { offset: 0, line: lines_before + 1 },
            at_end: false,
            separator,
        }
    }
}

impl<R: Read> Read for LineIndex<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        if n == 0 && !buf.is_empty() {
            self.at_end = true;
        }
        let read = buf.get(..n).unwrap_or(&[]);
        for (i, &b) in read.iter().enumerate() {
            let offset = self.offset + i as u64;
            let next = self.quote.next(b, self.separator);
            if next == QuoteState::Quoted && self.quote == QuoteState::FieldStart {
                self.opened = UnclosedQuote { offset, line: self.lines_before + 1 };
            }
            self.quote = next;
            if b == b'\n' {
                self.newlines.push_back(offset);
                self.lines_before += 1;
            }
        }
        self.offset += n as u64;
        Ok(n)
    }
}

impl<R> LineIndex<R> {
    /// The quoted field left open at the end of the file, once the whole
    /// file has been read; `None` before that or when every quote closed.
    fn unclosed_quote(&self) -> Option<UnclosedQuote> {
        (self.at_end && self.quote == QuoteState::Quoted).then_some(self.opened)
    }

    /// True when the byte just before offset `end` is `\n`. Offsets before
    /// it are forgotten: the parser only moves forward.
    fn newline_before(&mut self, end: u64) -> bool {
        let Some(last) = end.checked_sub(1) else { return false };
        while self.newlines.front().is_some_and(|&o| o < last) {
            self.newlines.pop_front();
        }
        self.newlines.front() == Some(&last)
    }
}

/// A CSV file whose columns are located by header name (order free, extra
/// columns ignored), read record by record.
pub(super) struct CsvTable {
    path: PathBuf,
    reader: csv::Reader<LineIndex<BufReader<File>>>,
    header: Vec<String>,
    header_line: u64,
    record: csv::ByteRecord,
    /// Physical lines before the CSV text (a `sep=` line), added to the
    /// parser's line numbers.
    lines_before: u64,
    /// The field separator (`,`, or what a `sep=X` line declares).
    separator: u8,
}

/// One CSV record whose field count matches the header and whose fields are
/// UTF-8.
pub(super) struct Row {
    /// Physical line where the record starts.
    pub line: u64,
    fields: csv::StringRecord,
}

impl Row {
    /// The field at `column` (an index from [`CsvTable::columns`], so always
    /// present; `""` otherwise).
    pub fn get(&self, column: usize) -> &str {
        self.fields.get(column).unwrap_or("")
    }

    /// The field at an optional column; `""` when the column is absent.
    pub fn get_opt(&self, column: Option<usize>) -> &str {
        column.map_or("", |c| self.get(c))
    }
}

impl CsvTable {
    /// The field separator.
    pub fn separator(&self) -> u8 {
        self.separator
    }

    /// The number of columns the header names.
    pub fn width(&self) -> usize {
        self.header.len()
    }

    /// Bytes of the records read so far, past the header (for progress).
    pub fn bytes_read(&self) -> u64 {
        self.reader.get_ref().offset
    }

    /// Open `path` and read its header. `expected` describes the header for
    /// the message about an empty file (for example `"query_id,text"`).
    pub fn open(path: &Path, expected: &str) -> Result<CsvTable> {
        let mut file = open(path)?;
        let (separator, lines_before) = read_separator_line(path, &mut file)?;
        let reader = csv::ReaderBuilder::new()
            .has_headers(true)
            .delimiter(separator)
            // Field counts are checked per record to report every bad line
            // with its number instead of stopping at the first.
            .flexible(true)
            .from_reader(LineIndex::new(file, lines_before, separator));
        let mut table = CsvTable {
            path: path.to_path_buf(),
            reader,
            header: Vec::new(),
            header_line: 1,
            record: csv::ByteRecord::new(),
            lines_before,
            separator,
        };
        let raw = table.reader.byte_headers().map_err(|e| wrap_csv(path, e))?.clone();
        if raw.is_empty() {
            return Err(Error::in_file(
                path,
                format!("expected a CSV header {}, found an empty file", quoted(expected)),
            ));
        }
        table.header_line = table.start_line(&raw);
        if let Some(message) = table.unclosed_quote_message(&raw, table.header_line) {
            return Err(Error::at_line(path, table.header_line, message));
        }
        for (i, field) in raw.iter().enumerate() {
            match std::str::from_utf8(field) {
                Ok(name) => table.header.push(name.trim().to_string()),
                Err(e) => {
                    let what = format!("header field {}", i + 1);
                    return Err(Error::at_line(path, table.header_line, utf8_message(e, &what)));
                }
            }
        }
        Ok(table)
    }

    /// Locate the `required` and `optional` columns by name. A missing
    /// required column or a column named twice is one error at the header
    /// line that lists the header found.
    pub fn columns<const R: usize, const O: usize>(
        &self,
        required: [&str; R],
        optional: [&str; O],
    ) -> Result<([usize; R], [Option<usize>; O])> {
        let mut problems = Problems::new(&self.path);
        for name in required.iter().chain(optional.iter()) {
            let positions: Vec<String> = self
                .header
                .iter()
                .enumerate()
                .filter(|(_, h)| h == name)
                .map(|(i, _)| (i + 1).to_string())
                .collect();
            if positions.len() > 1 {
                problems.push(
                    self.header_line,
                    format!(
                        "column {name:?} appears {} times in the header (fields {})",
                        positions.len(),
                        positions.join(", ")
                    ),
                );
            }
        }
        let missing: Vec<String> =
            required.iter().filter(|n| self.find(n).is_none()).map(|n| format!("{n:?}")).collect();
        if !missing.is_empty() {
            let plural = if missing.len() > 1 { "s" } else { "" };
            let all: Vec<String> = required.iter().map(|n| format!("{n:?}")).collect();
            let optional_note = if O > 0 {
                let names: Vec<String> = optional.iter().map(|n| format!("{n:?}")).collect();
                format!(" (optional: {})", names.join(", "))
            } else {
                String::new()
            };
            let hint = match self.header.as_slice() {
                [only] => separator_hint(only).map(|h| format!("; {h}")).unwrap_or_default(),
                _ => String::new(),
            };
            problems.push(
                self.header_line,
                format!(
                    "missing column{plural} {}: expected a header with columns {}{optional_note}, \
                     found {}{hint}",
                    missing.join(", "),
                    all.join(", "),
                    quoted(&self.header.join(","))
                ),
            );
        }
        problems.finish(())?;
        let required = required.map(|n| self.find(n).expect("missing columns returned above"));
        Ok((required, optional.map(|n| self.find(n))))
    }

    /// The physical line where `record`, just read, starts (module docs).
    fn start_line(&mut self, record: &csv::ByteRecord) -> u64 {
        let after = self.reader.position().clone();
        let inner_newlines: u64 =
            record.iter().map(|f| f.iter().filter(|&&b| b == b'\n').count() as u64).sum();
        // A record left open at end of file has no terminator: every `\n`
        // after its start is inside its last field.
        let ended_with_newline =
            self.unclosed_quote().is_none() && self.reader.get_mut().newline_before(after.byte());
        let line = after.line().saturating_sub(u64::from(ended_with_newline) + inner_newlines);
        line.max(1) + self.lines_before
    }

    /// The quoted field left open at end of file when the record just read
    /// holds it (as its last field); `None` for every other record.
    fn unclosed_quote(&self) -> Option<UnclosedQuote> {
        let quote = self.reader.get_ref().unclosed_quote()?;
        // Records before the open one end at or before its quote.
        (self.reader.position().byte() > quote.offset).then_some(quote)
    }

    /// The message for `record`, just read and starting at `line`, when it
    /// holds the quoted field left open at end of file.
    fn unclosed_quote_message(&self, record: &csv::ByteRecord, line: u64) -> Option<String> {
        let quote = self.unclosed_quote()?;
        let field = record.len().saturating_sub(1);
        let opened = if quote.line == line {
            "on this line".to_string()
        } else {
            format!("on line {}", quote.line)
        };
        let message = format!(
            "expected a closing quote (\") for the quoted field opened {opened}, found the end \
             of the file"
        );
        Some(match self.header.get(field) {
            Some(name) => in_column(name, &message),
            // The header itself (no names known yet).
            None => format!("header field {}: {message}", field + 1),
        })
    }

    fn find(&self, name: &str) -> Option<usize> {
        self.header.iter().position(|h| h == name)
    }

    /// The next record that has as many fields as the header and is valid
    /// UTF-8; records that are not are recorded in `problems` and skipped.
    /// Records made of one blank field (a line of spaces) are skipped like
    /// the empty lines the CSV parser already skips.
    pub fn next_row(&mut self, problems: &mut Problems) -> Result<Option<Row>> {
        loop {
            let more = self
                .reader
                .read_byte_record(&mut self.record)
                .map_err(|e| wrap_csv(&self.path, e))?;
            if !more {
                return Ok(None);
            }
            let record = std::mem::take(&mut self.record);
            let line = self.start_line(&record);
            self.record = record;
            if let Some(message) = self.unclosed_quote_message(&self.record, line) {
                problems.push(line, message);
                continue;
            }
            if self.record.len() == 1 && self.record.iter().all(|f| f.trim_ascii().is_empty()) {
                continue;
            }
            if self.record.len() != self.header.len() {
                problems.push(
                    line,
                    format!(
                        "expected {} fields as in the header, found {}",
                        self.header.len(),
                        self.record.len()
                    ),
                );
                continue;
            }
            match csv::StringRecord::from_byte_record(std::mem::take(&mut self.record)) {
                Ok(fields) => return Ok(Some(Row { line, fields })),
                Err(e) => {
                    let field = e.utf8_error().field();
                    let name = self.header.get(field).map_or("?", String::as_str);
                    let what = in_column(name, &utf8_message_field(e.utf8_error()));
                    problems.push(line, what);
                    self.record = e.into_byte_record();
                }
            }
        }
    }
}

/// Read a spreadsheet's `sep=X` first line from `file` (positioned after
/// the BOM), if it has one: the separator to read with and the number of
/// lines consumed (1, or 0 and `,` without such a line).
fn read_separator_line(path: &Path, file: &mut BufReader<File>) -> Result<(u8, u64)> {
    let head = file.fill_buf().map_err(|e| Error::io(path, e))?;
    let first = match head.iter().position(|&b| b == b'\n') {
        Some(end) => &head[..end],
        // A `sep=` line is short: without a line end in the buffer, the
        // first line is no such line unless it is the whole file.
        None => head,
    };
    match declared_separator(first) {
        None => Ok((b',', 0)),
        Some(Err(message)) => Err(Error::at_line(path, 1, message)),
        Some(Ok(separator)) => {
            let consumed = (first.len() + 1).min(head.len());
            file.consume(consumed);
            Ok((separator, 1))
        }
    }
}

/// The UTF-8 message for a CSV field (csv's error gives the byte offset).
fn utf8_message_field(err: &csv::Utf8Error) -> String {
    invalid_utf8_at(err.valid_up_to(), "the field")
}

/// Add the path (and line, when csv knows it) to a csv error.
fn wrap_csv(path: &Path, err: csv::Error) -> Error {
    let line = err.position().map(csv::Position::line);
    let message = format!("CSV error: {err}");
    match err.into_kind() {
        csv::ErrorKind::Io(e) => Error::io(path, e),
        _ => match line {
            Some(line) => Error::at_line(path, line, message),
            None => Error::in_file(path, message),
        },
    }
}

/// Helpers shared by the readers' unit tests.
#[cfg(test)]
pub(super) mod testutil {
    use std::io::Write;
    use std::path::PathBuf;

    /// A temp dir holding one file `name` with `content`; keep the dir alive
    /// while the path is used.
    pub fn temp_file(name: &str, content: &[u8]) -> (tempfile::TempDir, PathBuf) {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join(name);
        let mut f = std::fs::File::create(&path).expect("create temp file");
        f.write_all(content).expect("write temp file");
        (dir, path)
    }

    /// The shared Cranfield directory (`../shared/data/cranfield`), or `None`
    /// with a printed reason when it is absent (the test then skips).
    pub fn cranfield_dir() -> Option<PathBuf> {
        let dir = PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/../shared/data/cranfield"));
        if dir.is_dir() {
            Some(dir)
        } else {
            crate::test_skips::skip(&format!("shared data {} is absent", dir.display()));
            None
        }
    }

    /// The counts `scripts/cranfield_input_counts.py` computed with Python's
    /// csv and json modules.
    pub fn cranfield_counts() -> serde_json::Value {
        let path =
            concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/input/cranfield_counts.json");
        let text = std::fs::read_to_string(path).expect("fixture is committed");
        serde_json::from_str(&text).expect("fixture is JSON")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Write;

    fn file_with(bytes: &[u8]) -> tempfile::NamedTempFile {
        let mut f = tempfile::NamedTempFile::new().expect("temp file");
        f.write_all(bytes).expect("write temp file");
        f
    }

    #[test]
    fn lines_strip_bom_and_crlf_and_count_physically() {
        let f = file_with(b"\xEF\xBB\xBFfirst\r\n\r\nthird\nlast");
        let mut lines = Lines::open(f.path()).expect("opens");
        let mut seen = Vec::new();
        while let Some(line) = lines.next_line().expect("reads") {
            seen.push((line.number, line.text.expect("utf-8").to_string()));
        }
        let expected = [(1, "first"), (2, ""), (3, "third"), (4, "last")];
        let expected: Vec<(u64, String)> =
            expected.iter().map(|(n, s)| (*n, s.to_string())).collect();
        assert_eq!(seen, expected);
    }

    #[test]
    fn first_non_blank_line_skips_blank_lines() {
        let f = file_with(b"\n  \t\r\n  x y\n");
        let (n, text) = first_non_blank_line(f.path()).expect("reads").expect("has a line");
        assert_eq!((n, text.expect("utf-8")), (3, "  x y".to_string()));
        let blank = file_with(b"\n\r\n");
        assert!(first_non_blank_line(blank.path()).expect("reads").is_none());
    }

    #[test]
    fn first_non_blank_byte_skips_bom_and_whitespace_before_decoding() {
        let f = file_with(b"\xEF\xBB\xBF \r\n\t\n{\"id\": \"caf\xE9\"}\n");
        assert_eq!(first_non_blank_byte(f.path()).expect("reads"), Some(b'{'));
        // Past the reader's 8 KiB buffer.
        let mut late = vec![b' '; 20_000];
        late.push(0xE9);
        let f = file_with(&late);
        assert_eq!(first_non_blank_byte(f.path()).expect("reads"), Some(0xE9));
        let blank = file_with(b"\xEF\xBB\xBF\n \r\n");
        assert_eq!(first_non_blank_byte(blank.path()).expect("reads"), None);
    }

    #[test]
    fn quoted_cuts_long_values() {
        assert_eq!(quoted("deu-CH"), r#""deu-CH""#);
        let long = "é".repeat(100);
        let q = quoted(&long);
        assert_eq!(q.chars().count(), MAX_QUOTED_CHARS + 3);
        assert!(q.ends_with("\"…"));
    }

    #[test]
    fn check_id_trims_and_rejects_empty() {
        assert_eq!(check_id("  q7 "), Ok("q7"));
        assert_eq!(check_id(" "), Err(r#"expected a non-empty id, found " ""#.to_string()));
    }

    #[test]
    fn csv_columns_are_found_by_name_in_any_order() {
        let f = file_with(b"extra, text ,query_id\nx,hello,q1\n");
        let table = CsvTable::open(f.path(), "query_id,text").expect("opens");
        let ([q, t], [lang]) = table.columns(["query_id", "text"], ["lang"]).expect("found");
        assert_eq!((q, t, lang), (2, 1, None));
    }

    #[test]
    fn csv_missing_and_duplicate_columns_are_reported_at_the_header() {
        let f = file_with(b"\n\nquery_id,text,text\n");
        let table = CsvTable::open(f.path(), "query_id,doc_id").expect("opens");
        let err = table.columns(["query_id", "doc_id"], []).expect_err("doc_id missing");
        let msg = err.to_string();
        assert!(!msg.contains("appears"), "text is not asked for, so not checked: {msg}");
        assert!(msg.contains(r#":3: missing column "doc_id": expected a header with columns "query_id", "doc_id", found "query_id,text,text""#), "{msg}");
        let dup = table.columns(["query_id", "text"], []).expect_err("text twice");
        assert!(
            dup.to_string()
                .contains(r#":3: column "text" appears 2 times in the header (fields 2, 3)"#),
            "{dup}"
        );
    }

    fn csv_lines(bytes: &[u8]) -> (u64, Vec<(u64, String)>) {
        let f = file_with(bytes);
        let mut table = CsvTable::open(f.path(), "a,b").expect("opens");
        let mut problems = Problems::new(f.path());
        let mut rows = Vec::new();
        while let Some(row) = table.next_row(&mut problems).expect("reads") {
            rows.push((row.line, row.get(0).to_string()));
        }
        problems.finish(()).expect("no problems");
        (table.header_line, rows)
    }

    #[test]
    fn csv_lines_are_where_records_start_despite_blank_lines() {
        // Line 1-2 blank, header 3, blank 4-5, x 6, quoted field 7-8, blank 9, last 10.
        let lf = csv_lines(b"\n\na,b\n\n\nx,y\n\"multi\nline\",z\n\r\n1,2\r\n");
        let expected =
            vec![(6, "x".to_string()), (7, "multi\nline".to_string()), (10, "1".to_string())];
        assert_eq!(lf, (3, expected));
        // CRLF throughout, no final line end: header 1, blank 2, x 3, quoted 4-5, last 6.
        let crlf = csv_lines(b"\xEF\xBB\xBFa,b\r\n\r\nx,y\r\n\"m\r\nl\",z\r\n3,4");
        let expected = vec![(3, "x".to_string()), (4, "m\r\nl".to_string()), (6, "3".to_string())];
        assert_eq!(crlf, (1, expected));
    }

    /// Every problem `next_row` records for `bytes`, as `line: message`.
    fn csv_problems(bytes: &[u8]) -> Vec<String> {
        let f = file_with(bytes);
        let mut table = CsvTable::open(f.path(), "a,b").expect("header reads");
        let mut problems = Problems::new(f.path());
        while table.next_row(&mut problems).expect("reads").is_some() {}
        let Err(err) = problems.finish(()) else { return Vec::new() };
        match err.kind() {
            crate::ErrorKind::Input { problems, .. } => problems
                .iter()
                .map(|p| format!(":{}: {}", p.line.unwrap_or(0), p.message))
                .collect(),
            other => vec![format!("{other:?}")],
        }
    }

    #[test]
    fn quote_state_follows_the_csv_parser() {
        use QuoteState::*;
        let walk = |bytes: &[u8]| bytes.iter().fold(FieldStart, |s, &b| s.next(b, b','));
        // Hand-traced against csv-core's transition_nfa (default settings).
        assert_eq!(walk(b"a,\"x"), Quoted);
        assert_eq!(walk(b"a,\"x\ny,z"), Quoted, "a line end inside quotes is text");
        assert_eq!(walk(b"a,\"x\"\"y"), Quoted, "a doubled quote is a literal quote");
        assert_eq!(walk(b"a,\"x\""), QuoteInQuoted, "closed at end of input");
        assert_eq!(walk(b"a,5\" screen"), Unquoted, "a quote inside an unquoted field is text");
        assert_eq!(walk(b"a, \"x"), Unquoted, "a quote after a space does not open quoting");
        assert_eq!(walk(b"\"x\"y,"), FieldStart);
        assert_eq!(walk(b"\"x\"\r\n\""), Quoted);
    }

    #[test]
    fn csv_quote_left_open_at_end_of_file_is_an_error_at_its_record() {
        // The corpus and query cases of the audit: the open quote on line 2
        // swallowed lines 3-4 with no error before.
        let corpus = b"id,text\np1,\"ferry delayed\np2,ferries late\np3,bike stolen\n";
        assert_eq!(
            csv_problems(corpus),
            [":2: column \"text\": expected a closing quote (\") for the quoted field opened \
              on this line, found the end of the file"]
        );
        // The record starts on line 3; its first field spans lines 3-4 and
        // closes; the second field's quote opens on line 4 and never closes.
        let later = b"a,b\nx,y\n\"m\nl\",\"open\r\nrest\r\n";
        assert_eq!(
            csv_problems(later),
            [":3: column \"b\": expected a closing quote (\") for the quoted field opened on \
              line 4, found the end of the file"]
        );
        // Past the parser's 8 KiB buffer: the open quote on line 3 is found
        // only when the reader reaches the end of the file.
        let mut long = b"a,b\nx,y\nx,\"open\n".to_vec();
        long.extend(b"y,z\n".repeat(20_000));
        assert_eq!(
            csv_problems(&long),
            [":3: column \"b\": expected a closing quote (\") for the quoted field opened on \
              this line, found the end of the file"]
        );
        // Quoted line ends, doubled quotes and a closing quote right at the
        // end of the file (no final line end) stay valid.
        assert!(csv_problems(b"a,b\n\"x\ny\",\"say \"\"hi\"\"\"\n5\" tall,\"z\"").is_empty());
        // An open quote in the header swallows the whole file.
        let f = file_with(b"a,\"b\nx,y\n");
        let err = CsvTable::open(f.path(), "a,b").err().map(|e| e.to_string()).unwrap_or_default();
        assert!(
            err.ends_with(
                ":1: header field 2: expected a closing quote (\") for the quoted \
                           field opened on this line, found the end of the file"
            ),
            "{err}"
        );
    }
}
