//! A first look at an uploaded file, before anything is stored: its headers, a
//! few rows, and how the headers were matched, so the user can fix the mapping.

use super::columns::{ColumnMapping, Columns, DepthUnit, FileKind, MatchedColumn};
use super::problems::InputProblem;
use super::table::ReadFile;
use serde::{Deserialize, Serialize};

/// Data rows a preview shows unless told otherwise.
pub const PREVIEW_ROWS: usize = 20;

/// What to preview.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PreviewOptions {
    pub kind: FileKind,
    pub mapping: ColumnMapping,
    /// How many data rows to show.
    pub rows: usize,
    /// The file's name in problems; the kind's default name when `None`.
    pub file_name: Option<String>,
}

impl PreviewOptions {
    /// Preview a file of `kind` with no mapping, showing [`PREVIEW_ROWS`] rows.
    pub fn new(kind: FileKind) -> Self {
        PreviewOptions {
            kind,
            mapping: ColumnMapping::new(),
            rows: PREVIEW_ROWS,
            file_name: None,
        }
    }
}

/// One data row as text, with its line.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct PreviewRow {
    pub line: usize,
    pub cells: Vec<String>,
}

/// A file's headers, first rows and column matching.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Preview {
    pub kind: FileKind,
    pub header_line: usize,
    /// The headers as written.
    pub headers: Vec<String>,
    /// The first data rows.
    pub rows: Vec<PreviewRow>,
    /// All data rows in the file.
    pub total_rows: usize,
    /// Headers matched to our columns.
    pub matched: Vec<MatchedColumn>,
    /// Headers that are none of our columns: ignored, or kept as notes in a wells file.
    pub unknown: Vec<String>,
    /// Required columns not found, e.g. `depth_m or depth_ft`.
    pub missing: Vec<String>,
    /// For a tops file: the depth unit the header implies (`depth_ft` is feet).
    pub depth_unit: Option<DepthUnit>,
    /// Problems seen so far (header and mapping problems, rows with the wrong
    /// field count). Values are checked only when the file is read for storing.
    pub problems: Vec<InputProblem>,
}

/// Preview a file. `Err` when it cannot be read as CSV at all (too large, not
/// UTF-8, empty, no readable rows).
pub fn preview(bytes: &[u8], options: &PreviewOptions) -> Result<Preview, Vec<InputProblem>> {
    let file = options
        .file_name
        .as_deref()
        .unwrap_or(options.kind.default_file_name());
    preview_read(&ReadFile::read(bytes, file), options)
}

/// [`preview`] of a file read before: a new mapping costs no reading (problems
/// carry the file's name; `options.file_name` is not used).
pub fn preview_read(
    read: &ReadFile,
    options: &PreviewOptions,
) -> Result<Preview, Vec<InputProblem>> {
    let (table, mut problems) = read.table()?;
    let columns = Columns::resolve(
        options.kind,
        &table.headers,
        table.header_line,
        &options.mapping,
        &mut problems,
    );
    let depth_unit = match options.kind {
        FileKind::Tops if columns.field("depth_m").is_present() => Some(DepthUnit::Metres),
        FileKind::Tops if columns.field("depth_ft").is_present() => Some(DepthUnit::Feet),
        _ => None,
    };
    Ok(Preview {
        kind: options.kind,
        header_line: table.header_line,
        rows: table
            .rows
            .iter()
            .take(options.rows)
            .map(|r| PreviewRow {
                line: r.line,
                cells: r.cells.iter().map(str::to_string).collect(),
            })
            .collect(),
        total_rows: table.rows.len(),
        unknown: columns
            .other_headers()
            .map(|(_, h)| h.to_string())
            .collect(),
        matched: columns.matched,
        missing: columns.missing,
        headers: table.headers.clone(),
        depth_unit,
        problems: problems.finish(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const ODD: &str = "Well Name,Top,TVDSS,Age,Lith,Remarks\n\
        Fictive-1,Sea floor,400,0,shale,\n\
        Fictive-1,Base,9000,65,,cored\n\
        Fictive-2,Sea floor,300,0,shale,\n";

    #[test]
    fn a_preview_shows_headers_rows_and_what_is_missing() {
        let options = PreviewOptions {
            rows: 2,
            ..PreviewOptions::new(FileKind::Tops)
        };
        let p = preview(ODD.as_bytes(), &options).unwrap();
        assert_eq!(p.header_line, 1);
        assert_eq!(
            p.headers,
            ["Well Name", "Top", "TVDSS", "Age", "Lith", "Remarks"]
        );
        assert_eq!(p.total_rows, 3);
        assert_eq!(p.rows.len(), 2);
        assert_eq!(p.rows[1].line, 3);
        assert_eq!(
            p.rows[1].cells,
            ["Fictive-1", "Base", "9000", "65", "", "cored"]
        );
        assert!(p.matched.is_empty());
        assert_eq!(
            p.unknown,
            ["Well Name", "Top", "TVDSS", "Age", "Lith", "Remarks"]
        );
        assert_eq!(
            p.missing,
            [
                "well",
                "horizon",
                "depth_m or depth_ft",
                "age_ma",
                "lithology"
            ]
        );
        assert_eq!(p.depth_unit, None);
        assert_eq!(p.problems.len(), 5);
    }

    #[test]
    fn with_a_mapping_the_preview_matches_every_column() {
        let options = PreviewOptions {
            mapping: ColumnMapping::new()
                .with("Well Name", "well")
                .with("Top", "horizon")
                .with("TVDSS", "depth_ft")
                .with("Age", "age_ma")
                .with("Lith", "lithology"),
            ..PreviewOptions::new(FileKind::Tops)
        };
        let p = preview(ODD.as_bytes(), &options).unwrap();
        assert!(p.problems.is_empty(), "{:?}", p.problems);
        assert!(p.missing.is_empty());
        assert_eq!(p.unknown, ["Remarks"]);
        assert_eq!(
            p.matched[2],
            MatchedColumn {
                header: "TVDSS".into(),
                column: "depth_ft".into(),
                by_mapping: true
            }
        );
        assert_eq!(p.depth_unit, Some(DepthUnit::Feet));
    }

    #[test]
    fn an_unreadable_file_has_no_preview() {
        let p = preview(b"", &PreviewOptions::new(FileKind::Wells)).unwrap_err();
        assert_eq!(p[0].to_string(), "wells.csv: the file is empty");
    }
}
