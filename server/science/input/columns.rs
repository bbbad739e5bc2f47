//! Which of a file's headers is which of our columns: matching by name (any case,
//! any order), the user's own mapping for odd headers, and depth units.

use super::bounds::{PhysicalRange, check_length};
use super::problems::{InputProblem, Problems};
use super::table::{ReadFile, Row, Table, parse_number, read_table};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The unit of a depth column. Feet are converted to metres exactly (1 ft = 0.3048 m,
/// the international foot).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum DepthUnit {
    #[default]
    Metres,
    Feet,
}

impl DepthUnit {
    /// Metres in one international foot (exact by definition).
    pub const METRES_PER_FOOT: f64 = 0.3048;

    pub fn to_metres(self, value: f64) -> f64 {
        match self {
            DepthUnit::Metres => value,
            DepthUnit::Feet => value * Self::METRES_PER_FOOT,
        }
    }
}

/// The user's word on which file header is which column, e.g. `"Well Name" -> "well"`,
/// `"TVDSS" -> "depth_ft"`. Headers match in any case; a header mapped to `""` is
/// ignored. Headers not in the mapping are matched by their own name.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(transparent)]
pub struct ColumnMapping {
    headers: BTreeMap<String, String>,
}

impl ColumnMapping {
    pub fn new() -> Self {
        Self::default()
    }

    /// Read the file's `header` as our `column`.
    pub fn with(mut self, header: &str, column: &str) -> Self {
        self.headers.insert(header.to_string(), column.to_string());
        self
    }

    /// The pairs as given: file header, our column.
    pub fn pairs(&self) -> impl Iterator<Item = (&str, &str)> {
        self.headers.iter().map(|(h, c)| (h.as_str(), c.as_str()))
    }

    /// The position of the mapping entry for `header`, and its column.
    fn column_for(&self, header: &str) -> Option<(usize, String)> {
        let wanted = normalise(header);
        self.headers
            .iter()
            .enumerate()
            .find(|(_, (h, _))| normalise(h) == wanted)
            .map(|(k, (_, c))| (k, normalise(c)))
    }
}

/// The four kinds of input file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FileKind {
    Tops,
    Wells,
    SeaLevel,
    Picks,
    Calibration,
}

impl FileKind {
    /// The label problems carry when the caller gives no file name.
    pub fn default_file_name(self) -> &'static str {
        match self {
            FileKind::Tops => "tops.csv",
            FileKind::Wells => "wells.csv",
            FileKind::SeaLevel => "sea-level.csv",
            FileKind::Picks => "picks.csv",
            FileKind::Calibration => "calibration.csv",
        }
    }

    /// Our column names for this kind of file.
    pub fn columns(self) -> &'static [&'static str] {
        self.schema().columns
    }

    pub(crate) fn schema(self) -> &'static Schema {
        match self {
            FileKind::Tops => &TOPS,
            FileKind::Wells => &WELLS,
            FileKind::SeaLevel => &SEA_LEVEL,
            FileKind::Picks => &PICKS,
            FileKind::Calibration => &CALIBRATION,
        }
    }
}

/// The columns of one kind of file and the rules on which must be there.
#[derive(Debug)]
pub(crate) struct Schema {
    columns: &'static [&'static str],
    /// Each entry must be met by one of its alternatives, all of whose columns are present.
    required: &'static [&'static [&'static [&'static str]]],
    /// Columns that make sense only together.
    partners: &'static [(&'static str, &'static str)],
    /// Columns that say the same thing in two ways; at most one may be present.
    exclusive: &'static [(&'static str, &'static str)],
    /// Other columns are kept as notes (wells) rather than reported and ignored.
    others_are_notes: bool,
}

static TOPS: Schema = Schema {
    columns: &[
        "well",
        "horizon",
        "depth_m",
        "depth_ft",
        "age_ma",
        "lithology",
        "water_depth_m",
        "water_depth_min_m",
        "water_depth_max_m",
        "eroded_m",
        "eroded_at_ma",
    ],
    required: &[
        &[&["well"]],
        &[&["horizon"]],
        &[&["depth_m"], &["depth_ft"]],
        &[&["age_ma"]],
        &[&["lithology"]],
    ],
    partners: &[
        ("water_depth_min_m", "water_depth_max_m"),
        ("eroded_m", "eroded_at_ma"),
    ],
    exclusive: &[("depth_m", "depth_ft")],
    others_are_notes: false,
};

static WELLS: Schema = Schema {
    columns: &["well", "x", "y", "lat", "lon"],
    required: &[&[&["well"]], &[&["x", "y"], &["lat", "lon"]]],
    partners: &[("x", "y"), ("lat", "lon")],
    exclusive: &[],
    others_are_notes: true,
};

static SEA_LEVEL: Schema = Schema {
    columns: &["age_ma", "sea_level_m"],
    required: &[&[&["age_ma"]], &[&["sea_level_m"]]],
    partners: &[],
    exclusive: &[],
    others_are_notes: false,
};

static PICKS: Schema = Schema {
    columns: &["well", "rift_onset_ma", "rift_end_ma", "event"],
    required: &[&[&["well"]], &[&["rift_onset_ma"]], &[&["rift_end_ma"]]],
    partners: &[],
    exclusive: &[],
    others_are_notes: false,
};

static CALIBRATION: Schema = Schema {
    columns: &["well", "depth_m", "kind", "value", "uncertainty", "note"],
    required: &[
        &[&["well"]],
        &[&["depth_m"]],
        &[&["kind"]],
        &[&["value"]],
        &[&["uncertainty"]],
    ],
    partners: &[],
    exclusive: &[],
    others_are_notes: false,
};

/// Header text compared loosely: any case, spaces or hyphens as underscores.
pub(crate) fn normalise(header: &str) -> String {
    let mut out = String::with_capacity(header.len());
    for c in header.trim().chars() {
        let c = if c.is_whitespace() || c == '-' {
            '_'
        } else {
            c
        };
        if !(c == '_' && out.ends_with('_')) {
            out.extend(c.to_lowercase());
        }
    }
    out
}

/// A file header matched to one of our columns.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct MatchedColumn {
    /// The header as written in the file.
    pub header: String,
    /// Our column name.
    pub column: String,
    /// `true` when the user's mapping said so, `false` when matched by name.
    pub by_mapping: bool,
}

/// How a file's headers were matched.
#[derive(Debug)]
pub(crate) struct Columns {
    schema: &'static Schema,
    /// Per schema column: the index of the file column holding it.
    index: Vec<Option<usize>>,
    headers: Vec<String>,
    pub matched: Vec<MatchedColumn>,
    /// Indexes of headers that are none of our columns (and not mapped to `""`).
    pub others: Vec<usize>,
    /// Required columns not found, as `depth_m or depth_ft`, `x + y or lat + lon`.
    pub missing: Vec<String>,
}

/// One of our columns in a particular file: where it is and how the file heads it.
#[derive(Debug, Clone)]
pub(crate) struct Field {
    index: Option<usize>,
    label: String,
}

impl Columns {
    /// Match `headers` (on `header_line`) to `kind`'s columns, recording header
    /// problems: mapping mistakes, a column given twice, a required column missing,
    /// a column without its partner, and two ways of saying one thing.
    /// Read a file's table and match its headers, for a parser that goes on to read the
    /// rows. Stops with every problem found so far when the file cannot be read as CSV,
    /// its headers do not fit `kind`, or it has no data rows.
    pub(crate) fn open(
        bytes: &[u8],
        kind: FileKind,
        mapping: &ColumnMapping,
        mut problems: Problems,
    ) -> Result<(Table, Columns, Problems), Vec<InputProblem>> {
        let Some(table) = read_table(bytes, &mut problems) else {
            return Err(problems.finish());
        };
        let (columns, problems) = Columns::fit(&table, kind, mapping, problems)?;
        Ok((table, columns, problems))
    }

    /// [`Columns::open`] on a file read before: no bytes are read again.
    pub(crate) fn open_read<'r>(
        read: &'r ReadFile,
        kind: FileKind,
        mapping: &ColumnMapping,
    ) -> Result<(&'r Table, Columns, Problems), Vec<InputProblem>> {
        let (table, problems) = read.table()?;
        let (columns, problems) = Columns::fit(table, kind, mapping, problems)?;
        Ok((table, columns, problems))
    }

    /// Match a table's headers to `kind`, refusing headers that do not fit and a
    /// table without data rows.
    fn fit(
        table: &Table,
        kind: FileKind,
        mapping: &ColumnMapping,
        mut problems: Problems,
    ) -> Result<(Columns, Problems), Vec<InputProblem>> {
        let before = problems.count();
        let columns = Columns::resolve(
            kind,
            &table.headers,
            table.header_line,
            mapping,
            &mut problems,
        );
        if problems.count() > before {
            return Err(problems.finish());
        }
        if table.rows.is_empty() {
            problems.whole_file("the file has a header but no data rows");
            return Err(problems.finish());
        }
        Ok((columns, problems))
    }

    pub(crate) fn resolve(
        kind: FileKind,
        headers: &[String],
        header_line: usize,
        mapping: &ColumnMapping,
        problems: &mut Problems,
    ) -> Columns {
        let schema = kind.schema();
        let mut index = vec![None; schema.columns.len()];
        let mut matched = Vec::new();
        let mut others = Vec::new();
        let mut used_mapping = vec![false; mapping.headers.len()];
        for (i, header) in headers.iter().enumerate() {
            let (column, by_mapping) = match mapping.column_for(header) {
                Some((k, column)) => {
                    used_mapping[k] = true;
                    (column, true)
                }
                None => (normalise(header), false),
            };
            if by_mapping && column.is_empty() {
                continue;
            }
            let Some(c) = schema.columns.iter().position(|&name| name == column) else {
                if by_mapping {
                    problems.at(
                        header_line,
                        Some(header),
                        format!(
                            "is mapped to \"{column}\", which is not a column of a {} file; the columns are {}",
                            kind.default_file_name(),
                            schema.columns.join(", ")
                        ),
                    );
                } else if header.is_empty() && schema.others_are_notes {
                    // A nameless column cannot label a note; drop it quietly.
                } else {
                    others.push(i);
                }
                continue;
            };
            if let Some(first) = index[c] {
                problems.at(
                    header_line,
                    Some(header),
                    format!(
                        "is a second {} column (the first is \"{}\"); keep one",
                        schema.columns[c], headers[first]
                    ),
                );
                continue;
            }
            index[c] = Some(i);
            matched.push(MatchedColumn {
                header: header.clone(),
                column: schema.columns[c].to_string(),
                by_mapping,
            });
        }
        for ((header, _), used) in mapping.headers.iter().zip(used_mapping) {
            if !used {
                problems.at(
                    header_line,
                    Some(header),
                    "is named in the column mapping but the file has no such header",
                );
            }
        }
        let mut columns = Columns {
            schema,
            index,
            headers: headers.to_vec(),
            matched,
            others,
            missing: Vec::new(),
        };
        columns.check_rules(header_line, problems);
        columns
    }

    fn check_rules(&mut self, header_line: usize, problems: &mut Problems) {
        let mut missing = Vec::new();
        let have = |name: &str| self.field(name).index.is_some();
        let header = self.headers.join(", ");
        let hint = comma_hint(&header);
        for alternatives in self.schema.required {
            if alternatives.iter().any(|alt| alt.iter().all(|c| have(c))) {
                continue;
            }
            let wanted = alternatives
                .iter()
                .map(|alt| alt.join(" + "))
                .collect::<Vec<_>>()
                .join(" or ");
            // A file split on another separator misses every column for one reason:
            // say it once, below.
            if hint.is_empty() {
                problems.at(
                    header_line,
                    None,
                    format!("the required column {wanted} is missing; the header has: {header}"),
                );
            }
            missing.push(wanted);
        }
        if !hint.is_empty() && !missing.is_empty() {
            let list = missing.join(", ");
            let (noun, verb) = if missing.len() == 1 {
                ("column", "is")
            } else {
                ("columns", "are")
            };
            problems.at(
                header_line,
                None,
                format!(
                    "the required {noun} {list} {verb} missing; the header has: {header}{hint}"
                ),
            );
        }
        for &(a, b) in self.schema.partners {
            for (one, other) in [(a, b), (b, a)] {
                if have(one) && !have(other) {
                    problems.at(
                        header_line,
                        Some(&self.field(one).label),
                        format!("needs its partner column {other}"),
                    );
                }
            }
        }
        for &(a, b) in self.schema.exclusive {
            if have(a) && have(b) {
                problems.at(
                    header_line,
                    Some(&self.field(b).label),
                    format!("the file also has {a}; give the value one way only"),
                );
            }
        }
        self.missing = missing;
    }

    /// Our column `name` in this file (absent columns read as empty cells).
    pub(crate) fn field(&self, name: &str) -> Field {
        let c = self.schema.columns.iter().position(|&n| n == name);
        let index = c.and_then(|c| self.index[c]);
        Field {
            index,
            label: index.map_or(name, |i| self.headers[i].as_str()).to_string(),
        }
    }

    /// The other columns' headers with their indexes.
    pub(crate) fn other_headers(&self) -> impl Iterator<Item = (usize, &str)> {
        self.others.iter().map(|&i| (i, self.headers[i].as_str()))
    }
}

/// A hint when the header looks split on another separator than the comma.
fn comma_hint(header: &str) -> &'static str {
    if header.contains(';') || header.contains('\t') {
        " (the file seems to use ';' or tabs between columns; save it comma-separated)"
    } else {
        ""
    }
}

impl Field {
    pub(crate) fn is_present(&self) -> bool {
        self.index.is_some()
    }

    /// The column as the file heads it, for problems.
    pub(crate) fn label(&self) -> &str {
        &self.label
    }

    pub(crate) fn text<'r>(&self, row: &'r Row) -> &'r str {
        row.cell(self.index)
    }

    /// The cell's text; an empty cell is reported.
    pub(crate) fn required_text<'r>(
        &self,
        row: &'r Row,
        problems: &mut Problems,
    ) -> Option<&'r str> {
        let text = self.text(row);
        if text.is_empty() {
            problems.at(row.line, Some(&self.label), "is empty; a value is required");
            return None;
        }
        Some(text)
    }

    /// The cell's number; `None` when empty or when not a finite number (reported).
    pub(crate) fn number(&self, row: &Row, problems: &mut Problems) -> Option<f64> {
        parse_number(self.text(row))
            .map_err(|reason| problems.at(row.line, Some(&self.label), reason))
            .ok()
            .flatten()
    }

    /// The cell's number; an empty cell is reported too.
    pub(crate) fn required_number(&self, row: &Row, problems: &mut Problems) -> Option<f64> {
        self.required_text(row, problems)?;
        self.number(row, problems)
    }

    /// `value` (already in the range's unit) when it lies within `range`; otherwise
    /// the reason is reported in this column and `None` returned. `shown` is how
    /// the file wrote it when that differs (a depth in feet), for the message.
    pub(crate) fn within(
        &self,
        row: &Row,
        problems: &mut Problems,
        value: f64,
        range: &PhysicalRange,
        shown: Option<&str>,
    ) -> Option<f64> {
        match range.check_written(value, shown) {
            Ok(v) => Some(v),
            Err(reason) => {
                self.problem(row, problems, reason);
                None
            }
        }
    }

    /// The cell's text when it has at most `max` characters; otherwise reported.
    pub(crate) fn bounded_text<'r>(
        &self,
        row: &'r Row,
        problems: &mut Problems,
        what: &str,
        max: usize,
    ) -> Option<&'r str> {
        let text = self.text(row);
        match check_length(what, text, max) {
            Ok(()) => Some(text),
            Err(reason) => {
                self.problem(row, problems, reason);
                None
            }
        }
    }

    /// Report a problem in this column of `row`.
    pub(crate) fn problem(&self, row: &Row, problems: &mut Problems, reason: impl Into<String>) {
        problems.at(row.line, Some(&self.label), reason);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn headers(names: &[&str]) -> Vec<String> {
        names.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn headers_match_in_any_case_and_order_with_loose_separators() {
        let mut problems = Problems::new("tops.csv");
        let h = headers(&[
            "Age_MA",
            "Lithology",
            "DEPTH M",
            "horizon",
            "Well",
            "Remarks",
        ]);
        let cols = Columns::resolve(FileKind::Tops, &h, 1, &ColumnMapping::new(), &mut problems);
        assert!(problems.is_empty(), "{:?}", problems.finish());
        assert_eq!(cols.field("depth_m").index, Some(2));
        assert_eq!(cols.field("depth_m").label(), "DEPTH M");
        assert_eq!(cols.field("well").index, Some(4));
        assert!(!cols.field("eroded_m").is_present());
        assert_eq!(cols.field("eroded_m").label(), "eroded_m");
        assert_eq!(cols.other_headers().collect::<Vec<_>>(), [(5, "Remarks")]);
    }

    #[test]
    fn a_mapping_names_odd_headers_and_can_ignore_one() {
        let mut problems = Problems::new("tops.csv");
        let h = headers(&["Well Name", "Top", "TVDSS", "Age", "Lith", "depth_m"]);
        let mapping = ColumnMapping::new()
            .with("well name", "well")
            .with("TOP", "horizon")
            .with("TVDSS", "Depth_FT")
            .with("Age", "age_ma")
            .with("Lith", "lithology")
            .with("depth_m", "");
        let cols = Columns::resolve(FileKind::Tops, &h, 1, &mapping, &mut problems);
        assert!(problems.is_empty(), "{:?}", problems.finish());
        assert_eq!(cols.field("depth_ft").index, Some(2));
        assert!(!cols.field("depth_m").is_present());
        assert!(cols.matched.iter().all(|m| m.by_mapping));
        assert!(cols.others.is_empty());
    }

    #[test]
    fn mapping_mistakes_are_reported_at_the_header() {
        let mut problems = Problems::new("tops.csv");
        let h = headers(&["well", "horizon", "depth_m", "age_ma", "lithology", "Depth"]);
        let mapping = ColumnMapping::new()
            .with("Depth", "depth")
            .with("Nope", "well");
        Columns::resolve(FileKind::Tops, &h, 1, &mapping, &mut problems);
        let p = problems.finish();
        assert_eq!(p.len(), 2);
        assert_eq!(
            (p[0].line, p[0].column.as_deref()),
            (Some(1), Some("Depth"))
        );
        assert!(
            p[0].reason
                .starts_with("is mapped to \"depth\", which is not a column"),
            "{}",
            p[0]
        );
        assert_eq!(p[1].column.as_deref(), Some("Nope"));
    }

    #[test]
    fn missing_doubled_unpartnered_and_two_way_columns_are_reported() {
        let mut problems = Problems::new("tops.csv");
        let h = headers(&[
            "well",
            "WELL",
            "depth_m",
            "depth_ft",
            "age_ma",
            "lithology",
            "eroded_m",
        ]);
        let cols = Columns::resolve(FileKind::Tops, &h, 3, &ColumnMapping::new(), &mut problems);
        assert_eq!(cols.missing, ["horizon"]);
        let p = problems.finish();
        let reasons: Vec<_> = p
            .iter()
            .map(|p| (p.line, p.column.as_deref(), p.reason.as_str()))
            .collect();
        assert_eq!(
            reasons,
            [
                (
                    Some(3),
                    Some("WELL"),
                    "is a second well column (the first is \"well\"); keep one"
                ),
                (
                    Some(3),
                    None,
                    "the required column horizon is missing; the header has: well, WELL, depth_m, depth_ft, age_ma, lithology, eroded_m"
                ),
                (
                    Some(3),
                    Some("eroded_m"),
                    "needs its partner column eroded_at_ma"
                ),
                (
                    Some(3),
                    Some("depth_ft"),
                    "the file also has depth_m; give the value one way only"
                ),
            ]
        );
    }

    #[test]
    fn a_wells_file_needs_one_complete_position_pair() {
        let mut problems = Problems::new("wells.csv");
        let cols = Columns::resolve(
            FileKind::Wells,
            &headers(&["well", "x", "lat"]),
            1,
            &ColumnMapping::new(),
            &mut problems,
        );
        assert_eq!(cols.missing, ["x + y or lat + lon"]);
        assert_eq!(problems.count(), 3);
    }

    #[test]
    fn a_semicolon_separated_file_gets_a_hint() {
        let mut problems = Problems::new("sea-level.csv");
        Columns::resolve(
            FileKind::SeaLevel,
            &headers(&["age_ma;sea_level_m"]),
            1,
            &ColumnMapping::new(),
            &mut problems,
        );
        assert!(problems.finish()[0].reason.contains("comma-separated"));
    }

    #[test]
    fn a_semicolon_separated_file_is_one_problem_not_one_per_column() {
        let mut problems = Problems::new("tops.csv");
        Columns::resolve(
            FileKind::Tops,
            &headers(&["well;horizon;depth_m;age_ma;lithology"]),
            1,
            &ColumnMapping::new(),
            &mut problems,
        );
        let found = problems.finish();
        assert_eq!(found.len(), 1, "{found:#?}");
        let reason = &found[0].reason;
        assert!(
            reason.starts_with("the required columns well, horizon, depth_m or depth_ft, age_ma"),
            "{reason}"
        );
        assert!(reason.ends_with("save it comma-separated)"), "{reason}");
    }

    #[test]
    fn feet_convert_exactly() {
        // 1 ft = 0.3048 m exactly (international foot, 1959 agreement; from memory).
        assert_eq!(DepthUnit::Feet.to_metres(10_000.0), 3048.0);
        assert_eq!(DepthUnit::Metres.to_metres(12.5), 12.5);
    }
}
