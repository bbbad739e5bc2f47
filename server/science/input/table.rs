//! Reading a CSV file's bytes into a header and rows of trimmed text cells, with
//! the line of every row, refusing files that are too large, not UTF-8, empty or
//! ragged.

use super::problems::{InputProblem, Problems};
use csv::{ReaderBuilder, StringRecord, Trim};

/// The largest input file accepted (64 MiB): far above any real well set, low
/// enough that a mistaken upload cannot exhaust the server's memory.
pub const MAX_FILE_BYTES: usize = 64 * 1024 * 1024;

const BOM: &[u8] = b"\xEF\xBB\xBF";

/// A CSV file as a header and data rows. Cells are trimmed; rows with every cell
/// empty (blank lines, `,,,` lines from spreadsheets) are left out.
#[derive(Debug)]
pub(crate) struct Table {
    /// Line of the header (1 unless the file starts with blank lines).
    pub header_line: usize,
    /// Header names as written (trimmed).
    pub headers: Vec<String>,
    /// Data rows with as many cells as the header.
    pub rows: Vec<Row>,
}

/// A file's bytes read once as CSV, under the file's name: its table with the
/// problems found while reading it (rows with the wrong field count), or every
/// reason it cannot be read at all. Previews and parsers take it with any column
/// mapping, so a new mapping never reads the bytes again.
#[derive(Debug)]
pub struct ReadFile {
    file_name: String,
    read: Result<(Table, Problems), Vec<InputProblem>>,
}

impl ReadFile {
    /// Read `bytes` (named `file_name` in every problem).
    pub fn read(bytes: &[u8], file_name: &str) -> ReadFile {
        let mut problems = Problems::new(file_name);
        let read = match read_table(bytes, &mut problems) {
            Some(table) => Ok((table, problems)),
            None => Err(problems.finish()),
        };
        ReadFile {
            file_name: file_name.to_string(),
            read,
        }
    }

    /// The name problems carry.
    pub fn file_name(&self) -> &str {
        &self.file_name
    }

    /// The headers as written, when the file could be read.
    pub fn headers(&self) -> Option<&[String]> {
        self.read.as_ref().ok().map(|(t, _)| t.headers.as_slice())
    }

    /// The table and a fresh copy of the reading problems, for one preview or parse;
    /// or why the file cannot be read.
    pub(crate) fn table(&self) -> Result<(&Table, Problems), Vec<InputProblem>> {
        match &self.read {
            Ok((table, problems)) => Ok((table, problems.clone())),
            Err(problems) => Err(problems.clone()),
        }
    }
}

/// One data row and the line it starts on.
#[derive(Debug)]
pub(crate) struct Row {
    pub line: usize,
    pub cells: StringRecord,
    /// As many cells as the header. An incomplete row is already reported; it is
    /// kept only so a well's count of surfaces stays right.
    pub complete: bool,
}

impl Row {
    /// The cell in column `index`, or `""` when there is no such column.
    pub(crate) fn cell(&self, index: Option<usize>) -> &str {
        index.and_then(|i| self.cells.get(i)).unwrap_or("")
    }
}

/// Read `bytes` as CSV. On refusal every problem found is in `problems` and the
/// result is `None`. Rows whose field count differs from the header's are
/// reported and marked incomplete, so the caller can go on checking the others.
pub(crate) fn read_table(bytes: &[u8], problems: &mut Problems) -> Option<Table> {
    if bytes.len() > MAX_FILE_BYTES {
        problems.whole_file(format!(
            "the file is {} bytes, over the limit of {} MiB ({MAX_FILE_BYTES} bytes)",
            bytes.len(),
            MAX_FILE_BYTES / (1024 * 1024)
        ));
        return None;
    }
    let bytes = bytes.strip_prefix(BOM).unwrap_or(bytes);
    let text = utf8_text(bytes, problems)?;
    if text.trim().is_empty() {
        problems.whole_file("the file is empty");
        return None;
    }

    let mut reader = ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(Trim::All)
        .from_reader(text.as_bytes());
    let mut lines = LineCounter::new(text.as_bytes());
    let mut header: Option<(usize, StringRecord)> = None;
    let mut rows = Vec::new();
    let before = problems.count();
    let open_quote = unclosed_quote(text.as_bytes());
    loop {
        let mut record = StringRecord::new();
        match reader.read_record(&mut record) {
            Ok(true) => {}
            Ok(false) => break,
            Err(e) => {
                let line = lines.line_at(e.position().map_or(0, |p| p.byte()));
                problems.at(line, None, format!("cannot be read as CSV: {e}"));
                continue;
            }
        }
        if record.iter().all(str::is_empty) {
            continue;
        }
        let start = record.position().map_or(0, |p| p.byte());
        let line = lines.line_at(start);
        // The quote left open is in the last record, which runs to the end of the file.
        if let Some(quote) = open_quote
            && start <= quote as u64
            && reader.position().byte() >= text.len() as u64
        {
            let quote_line = 1 + text.as_bytes()[..quote]
                .iter()
                .filter(|&&b| b == b'\n')
                .count();
            problems.at(
                quote_line,
                None,
                "has a quote left open: the quoted cell that starts here is never closed, so the rest of the file reads as one cell; close the quote or remove it",
            );
            // Left open in the header: nothing of the file can be read.
            header.as_ref()?;
            rows.push(Row {
                line,
                cells: record,
                complete: false,
            });
            continue;
        }
        match &header {
            None => header = Some((line, record)),
            Some((_, names)) => {
                let complete = record.len() == names.len();
                if !complete {
                    problems.at(
                        line,
                        None,
                        format!(
                            "has {} fields but the header has {}; check for a missing or extra comma, or a quote left open",
                            record.len(),
                            names.len()
                        ),
                    );
                }
                rows.push(Row {
                    line,
                    cells: record,
                    complete,
                });
            }
        }
    }
    let Some((header_line, names)) = header else {
        problems.whole_file("the file has no header row");
        return None;
    };
    if problems.count() > before && !rows.iter().any(|r| r.complete) {
        return None;
    }
    Some(Table {
        header_line,
        headers: names.iter().map(str::to_string).collect(),
        rows,
    })
}

/// The byte offset of a quote that opens a cell and is never closed, so that the
/// rest of the file reads as one cell. Quotes are read as the CSV reader reads
/// them: one opens a cell only as its first character, and inside a quoted cell a
/// doubled quote stands for one; elsewhere a quote is an ordinary character
/// (`12" casing`).
fn unclosed_quote(text: &[u8]) -> Option<usize> {
    let mut open = None;
    let mut field_start = true;
    let mut i = 0;
    while i < text.len() {
        let b = text[i];
        if open.is_some() {
            if b == b'"' {
                if text.get(i + 1) == Some(&b'"') {
                    i += 1;
                } else {
                    open = None;
                }
            }
        } else if b == b',' || b == b'\n' || b == b'\r' {
            field_start = true;
        } else {
            if b == b'"' && field_start {
                open = Some(i);
            }
            field_start = false;
        }
        i += 1;
    }
    open
}

/// Line numbers from the byte offsets the CSV reader gives. (Its own line count
/// skips blank lines and miscounts CRLF, so it cannot be shown to users.)
struct LineCounter<'a> {
    text: &'a [u8],
    offset: usize,
    line: usize,
}

impl<'a> LineCounter<'a> {
    fn new(text: &'a [u8]) -> Self {
        LineCounter {
            text,
            offset: 0,
            line: 1,
        }
    }

    /// The line of the record starting at `byte`. Offsets must not decrease.
    fn line_at(&mut self, byte: u64) -> usize {
        // A record's offset is where the previous one ended: step over line ends
        // and blank lines to the record itself.
        let mut start = usize::try_from(byte)
            .unwrap_or(usize::MAX)
            .min(self.text.len());
        while start < self.text.len() && matches!(self.text[start], b'\r' | b'\n') {
            start += 1;
        }
        if start >= self.offset {
            self.line += self.text[self.offset..start]
                .iter()
                .filter(|&&b| b == b'\n')
                .count();
            self.offset = start;
        }
        self.line
    }
}

/// The file as text, or a problem for every line holding bytes that are not UTF-8.
fn utf8_text<'a>(bytes: &'a [u8], problems: &mut Problems) -> Option<&'a str> {
    let mut offset = 0;
    loop {
        match std::str::from_utf8(&bytes[offset..]) {
            Ok(text) if offset == 0 => return Some(text),
            Ok(_) => return None,
            Err(e) => {
                let at = offset + e.valid_up_to();
                let line = 1 + bytes[..at].iter().filter(|&&b| b == b'\n').count();
                problems.at(
                    line,
                    None,
                    "holds bytes that are not UTF-8 text; save the file as CSV in UTF-8",
                );
                // One report per line: go on from the start of the next line.
                match bytes[at..].iter().position(|&b| b == b'\n') {
                    Some(n) => offset = at + n + 1,
                    None => return None,
                }
            }
        }
    }
}

/// A numeric cell: `Ok(None)` when empty, `Err(reason)` when not a finite number.
pub(crate) fn parse_number(text: &str) -> Result<Option<f64>, String> {
    if text.is_empty() {
        return Ok(None);
    }
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(Some(v)),
        Ok(_) => Err(format!("\"{text}\" is not a finite number")),
        Err(_) => Err(format!("\"{text}\" is not a number")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &[u8]) -> Result<Table, Vec<crate::input::InputProblem>> {
        let mut problems = Problems::new("t.csv");
        let table = read_table(text, &mut problems);
        match table {
            Some(t) if problems.is_empty() => Ok(t),
            _ => Err(problems.finish()),
        }
    }

    #[test]
    fn bom_crlf_padding_and_blank_lines_are_tolerated() {
        let t = read(b"\xEF\xBB\xBF well , age_ma\r\n A-1 , 5 \r\n\r\n,\r\nB-2,\"6\"\r\n\r\n\r\n")
            .unwrap();
        assert_eq!(t.header_line, 1);
        assert_eq!(t.headers, ["well", "age_ma"]);
        assert_eq!(t.rows.len(), 2);
        assert_eq!(
            (
                t.rows[0].line,
                t.rows[0].cell(Some(0)),
                t.rows[0].cell(Some(1))
            ),
            (2, "A-1", "5")
        );
        // Blank and all-empty lines are skipped but still counted.
        assert_eq!((t.rows[1].line, t.rows[1].cell(Some(1))), (5, "6"));
        assert_eq!(t.rows[1].cell(None), "");
    }

    #[test]
    fn lines_count_blank_lines_before_and_between_rows() {
        let t = read(b"\n\r\nwell,age_ma\n\n\nA-1,5\r\n  \r\nB-2,6").unwrap();
        assert_eq!(t.header_line, 3);
        let lines: Vec<_> = t.rows.iter().map(|r| r.line).collect();
        assert_eq!(lines, [6, 8]);
    }

    #[test]
    fn a_file_over_the_limit_is_refused_naming_the_limit() {
        let big = vec![b'a'; MAX_FILE_BYTES + 1];
        let p = read(&big).unwrap_err();
        assert_eq!(p.len(), 1);
        assert_eq!(p[0].line, None);
        assert!(p[0].reason.contains("64 MiB"), "{}", p[0]);
    }

    #[test]
    fn bytes_that_are_not_utf8_are_refused_on_each_line_that_has_them() {
        let p = read(b"well,age_ma\nA-1,5\nB\xE9-2,6\nC-3,7\n\xFF,8").unwrap_err();
        let lines: Vec<_> = p.iter().map(|p| p.line).collect();
        assert_eq!(lines, [Some(3), Some(5)]);
        assert!(p[0].reason.contains("not UTF-8"), "{}", p[0]);
    }

    #[test]
    fn an_empty_file_is_refused() {
        for empty in [&b""[..], b"\xEF\xBB\xBF", b"  \r\n\n"] {
            let p = read(empty).unwrap_err();
            assert_eq!(p[0].reason, "the file is empty");
        }
        assert_eq!(
            read(b",,\n,,\n").unwrap_err()[0].reason,
            "the file has no header row"
        );
    }

    #[test]
    fn rows_with_another_field_count_are_reported_with_their_line() {
        let mut problems = Problems::new("t.csv");
        let t = read_table(b"well,age_ma\nA-1,5\nB-2\nC-3,7,9\nD-4,8\n", &mut problems).unwrap();
        let complete: Vec<_> = t.rows.iter().map(|r| (r.line, r.complete)).collect();
        assert_eq!(complete, [(2, true), (3, false), (4, false), (5, true)]);
        let p = problems.finish();
        assert_eq!(
            p.iter().map(|p| p.line).collect::<Vec<_>>(),
            [Some(3), Some(4)]
        );
        assert!(
            p[0].reason.starts_with("has 1 fields but the header has 2"),
            "{}",
            p[0]
        );
    }

    #[test]
    fn a_quoted_cell_across_lines_keeps_the_line_where_its_row_starts() {
        let t = read(b"well,note\nA-1,\"two\nlines\"\nB-2,x\n").unwrap();
        assert_eq!(t.rows[0].cell(Some(1)), "two\nlines");
        assert_eq!(t.rows[1].line, 4);
    }

    #[test]
    fn a_quote_left_open_is_reported_where_it_opens() {
        // The open quote swallows the rest of the file into one cell; here the row
        // even has the header's field count, so only the quote can explain it.
        let p = read(b"age_ma,sea_level_m\n0,0\n5,\"1\n10,5\n20,6\n").unwrap_err();
        assert_eq!(p.len(), 1, "{p:#?}");
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(3), None));
        assert!(p[0].reason.starts_with("has a quote left open"), "{}", p[0]);
        // In the header, nothing can be read at all.
        let p = read(b"well,\"age_ma\nA-1,5\n").unwrap_err();
        assert_eq!(p.len(), 1, "{p:#?}");
        assert_eq!(p[0].line, Some(1));
    }

    #[test]
    fn quotes_that_close_or_stand_inside_a_cell_are_not_left_open() {
        let t = read(b"well,note\nA-1,\"say \"\"hi\"\"\"\nB-2,12\" casing\nC-3,\"x\"\n").unwrap();
        assert_eq!(t.rows.len(), 3);
        assert_eq!(t.rows[0].cell(Some(1)), "say \"hi\"");
        assert_eq!(t.rows[1].cell(Some(1)), "12\" casing");
        assert_eq!(unclosed_quote(b"a,\"b\"\"\n"), Some(2));
        assert_eq!(unclosed_quote(b"a,b\"\n"), None);
    }

    #[test]
    fn numbers_must_be_finite() {
        assert_eq!(parse_number(""), Ok(None));
        assert_eq!(parse_number("-12.5e2"), Ok(Some(-1250.0)));
        assert_eq!(parse_number("abc"), Err("\"abc\" is not a number".into()));
        assert_eq!(
            parse_number("NaN"),
            Err("\"NaN\" is not a finite number".into())
        );
        assert_eq!(
            parse_number("inf"),
            Err("\"inf\" is not a finite number".into())
        );
    }
}
