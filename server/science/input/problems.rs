//! What is wrong with an input file, and where: file, line, column and reason.

use serde::Serialize;
use std::fmt;

/// The most problems listed for one file; the rest are summed up in a final
/// "and N more problems" entry so a badly broken file stays readable.
pub const MAX_PROBLEMS: usize = 200;

/// One problem found in an input file.
///
/// Shown as `tops.csv line 7, column depth_m: "abc" is not a number`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct InputProblem {
    /// The file's label: its name when the caller gave one, else `tops.csv`,
    /// `wells.csv`, `sea-level.csv` or `picks.csv`.
    pub file: String,
    /// 1-based line in the file (the header is line 1); `None` for the file as a whole.
    pub line: Option<usize>,
    /// The column as headed in the file (or the expected column's name when it is missing).
    pub column: Option<String>,
    pub reason: String,
}

impl fmt::Display for InputProblem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.file)?;
        if let Some(line) = self.line {
            write!(f, " line {line}")?;
        }
        if let Some(column) = &self.column {
            write!(f, ", column {column}")?;
        }
        write!(f, ": {}", self.reason)
    }
}

impl std::error::Error for InputProblem {}

/// Give every problem the file's own name (e.g. the uploaded file name), for the
/// parsers that take no options and label problems with a default name.
pub fn name_file(problems: &mut [InputProblem], file: &str) {
    for p in problems {
        p.file = file.to_string();
    }
}

/// Collects the problems of one file, keeping the earliest lines when there are
/// too many, with memory bounded however broken the file is.
#[derive(Debug, Clone)]
pub(crate) struct Problems {
    file: String,
    kept: Vec<InputProblem>,
    dropped: usize,
}

impl Problems {
    pub(crate) fn new(file: &str) -> Self {
        Problems {
            file: file.to_string(),
            kept: Vec::new(),
            dropped: 0,
        }
    }

    /// A problem at a line, optionally in a column.
    pub(crate) fn at(&mut self, line: usize, column: Option<&str>, reason: impl Into<String>) {
        self.push(Some(line), column, reason.into());
    }

    /// A problem with the file as a whole.
    pub(crate) fn whole_file(&mut self, reason: impl Into<String>) {
        self.push(None, None, reason.into());
    }

    /// How many problems so far, including any beyond the cap. Comparing two
    /// counts tells whether a row or a well added any.
    pub(crate) fn count(&self) -> usize {
        self.kept.len() + self.dropped
    }

    pub(crate) fn is_empty(&self) -> bool {
        self.count() == 0
    }

    fn push(&mut self, line: Option<usize>, column: Option<&str>, reason: String) {
        self.kept.push(InputProblem {
            file: self.file.clone(),
            line,
            column: column.map(str::to_string),
            reason,
        });
        if self.kept.len() >= 2 * MAX_PROBLEMS {
            self.keep_earliest();
        }
    }

    fn keep_earliest(&mut self) {
        // Stable: problems of one line stay in the order they were found.
        self.kept.sort_by_key(|p| p.line.unwrap_or(0));
        if self.kept.len() > MAX_PROBLEMS {
            self.dropped += self.kept.len() - MAX_PROBLEMS;
            self.kept.truncate(MAX_PROBLEMS);
        }
    }

    /// The problems in line order, capped, with the summary entry when some were left out.
    pub(crate) fn finish(mut self) -> Vec<InputProblem> {
        self.keep_earliest();
        if self.dropped > 0 {
            let n = self.dropped;
            self.kept.push(InputProblem {
                file: self.file,
                line: None,
                column: None,
                reason: format!("and {n} more problem{}", if n == 1 { "" } else { "s" }),
            });
        }
        self.kept
    }

    /// `Ok(value)` when nothing was found, else every problem.
    pub(crate) fn result<T>(self, value: T) -> Result<T, Vec<InputProblem>> {
        if self.is_empty() {
            Ok(value)
        } else {
            Err(self.finish())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_problem_reads_file_line_column_reason() {
        let p = InputProblem {
            file: "tops.csv".into(),
            line: Some(7),
            column: Some("depth_m".into()),
            reason: "\"abc\" is not a number".into(),
        };
        assert_eq!(
            p.to_string(),
            "tops.csv line 7, column depth_m: \"abc\" is not a number"
        );
        let whole = InputProblem {
            line: None,
            column: None,
            reason: "the file is empty".into(),
            ..p
        };
        assert_eq!(whole.to_string(), "tops.csv: the file is empty");
    }

    #[test]
    fn problems_serialize_with_their_location() {
        let mut problems = Problems::new("wells.csv");
        problems.at(3, Some("x"), "bad");
        let json = serde_json::to_value(problems.finish()).unwrap();
        assert_eq!(
            json,
            serde_json::json!([{ "file": "wells.csv", "line": 3, "column": "x", "reason": "bad" }])
        );
    }

    #[test]
    fn the_list_is_capped_at_the_earliest_lines_with_a_count_of_the_rest() {
        let mut problems = Problems::new("tops.csv");
        // Found out of line order, as per-well checks do after row checks.
        for line in (2..1002).rev() {
            problems.at(line, None, "bad");
        }
        assert_eq!(problems.count(), 1000);
        let list = problems.finish();
        assert_eq!(list.len(), MAX_PROBLEMS + 1);
        assert_eq!(list[0].line, Some(2));
        assert_eq!(list[MAX_PROBLEMS - 1].line, Some(MAX_PROBLEMS + 1));
        assert_eq!(list[MAX_PROBLEMS].line, None);
        assert_eq!(list[MAX_PROBLEMS].reason, "and 800 more problems");
    }

    #[test]
    fn renaming_the_file_relabels_every_problem() {
        let mut problems = Problems::new("sea-level.csv");
        problems.whole_file("the file is empty");
        let mut list = problems.finish();
        name_file(&mut list, "curve_2024.csv");
        assert_eq!(list[0].to_string(), "curve_2024.csv: the file is empty");
    }
}
