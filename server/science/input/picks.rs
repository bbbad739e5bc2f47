//! The picks file: a rift onset and rift end chosen by hand for some wells, which
//! the analysis uses instead of its own proposal.

use super::bounds::{AGE_MA, MAX_NAME_CHARS};
use super::columns::{ColumnMapping, Columns, FileKind};
use super::problems::{InputProblem, Problems};
use serde::{Deserialize, Serialize};
use std::collections::HashMap;
use std::collections::hash_map::Entry;

/// A well's rift interval as picked: onset older (larger Ma) than end.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RiftPick {
    pub well: String,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    /// The line of the file the pick was read from, for problems found later (a
    /// well that is not in the tops file).
    pub line: usize,
}

/// Read a picks file: `well`, `rift_onset_ma`, `rift_end_ma`, one row per well;
/// both ages not negative, within the age of the Earth ([`AGE_MA`]), and the onset
/// older than the end; well names of at most [`MAX_NAME_CHARS`]. Other columns are ignored.
pub fn parse_picks(bytes: &[u8]) -> Result<Vec<RiftPick>, Vec<InputProblem>> {
    let (table, columns, mut problems) = Columns::open(
        bytes,
        FileKind::Picks,
        &ColumnMapping::new(),
        Problems::new(FileKind::Picks.default_file_name()),
    )?;
    let (well, onset, end) = (
        columns.field("well"),
        columns.field("rift_onset_ma"),
        columns.field("rift_end_ma"),
    );
    let mut picks = Vec::with_capacity(table.rows.len());
    let mut first_line: HashMap<&str, usize> = HashMap::new();
    for row in table.rows.iter().filter(|r| r.complete) {
        let name = well
            .required_text(row, &mut problems)
            .and_then(|_| well.bounded_text(row, &mut problems, "the well name", MAX_NAME_CHARS));
        let ages = [&onset, &end].map(|f| {
            let age = f.required_number(row, &mut problems)?;
            if age < 0.0 {
                f.problem(
                    row,
                    &mut problems,
                    format!("{age} Ma is negative; ages are millions of years before present"),
                );
                return None;
            }
            f.within(row, &mut problems, age, &AGE_MA, None)
        });
        if let [Some(o), Some(e)] = ages
            && o <= e
        {
            onset.problem(
                row,
                &mut problems,
                format!("rift onset {o} Ma must be older (a larger age) than rift end {e} Ma"),
            );
            continue;
        }
        let Some(name) = name else { continue };
        match first_line.entry(name) {
            Entry::Occupied(first) => well.problem(
                row,
                &mut problems,
                format!("well \"{name}\" already has a pick (line {})", first.get()),
            ),
            Entry::Vacant(v) => {
                v.insert(row.line);
            }
        }
        if let [Some(rift_onset_ma), Some(rift_end_ma)] = ages {
            picks.push(RiftPick {
                well: name.to_string(),
                rift_onset_ma,
                rift_end_ma,
                line: row.line,
            });
        }
    }
    problems.result(picks)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn picks_are_read() {
        let picks =
            parse_picks(b"Rift_End_Ma,well,RIFT_ONSET_MA\n140,Kestrel-1,165.5\n0,Plover-2,12\n")
                .unwrap();
        assert_eq!(
            picks,
            [
                RiftPick {
                    well: "Kestrel-1".into(),
                    rift_onset_ma: 165.5,
                    rift_end_ma: 140.0,
                    line: 2,
                },
                RiftPick {
                    well: "Plover-2".into(),
                    rift_onset_ma: 12.0,
                    rift_end_ma: 0.0,
                    line: 3,
                },
            ]
        );
    }

    #[test]
    fn an_onset_younger_than_the_end_is_refused() {
        let p = parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,140,165\n").unwrap_err();
        assert_eq!(
            (p[0].line, p[0].column.as_deref()),
            (Some(2), Some("rift_onset_ma"))
        );
        assert_eq!(
            p[0].reason,
            "rift onset 140 Ma must be older (a larger age) than rift end 165 Ma"
        );
    }

    #[test]
    fn a_negative_age_is_refused() {
        let p = parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,10,-2\n").unwrap_err();
        assert_eq!(
            (p[0].line, p[0].column.as_deref()),
            (Some(2), Some("rift_end_ma"))
        );
    }

    #[test]
    fn a_second_pick_for_a_well_is_refused() {
        let p =
            parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,160,140\nKestrel-1,100,90\n")
                .unwrap_err();
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(3), Some("well")));
        assert_eq!(
            p[0].reason,
            "well \"Kestrel-1\" already has a pick (line 2)"
        );
    }

    #[test]
    fn an_age_older_than_the_earth_is_refused_where_it_stands() {
        // The Earth is about 4,570 Ma old [memory]; the bound is 4,600 Ma (bounds.rs).
        let p = parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,1e15,40\n").unwrap_err();
        assert_eq!(p.len(), 1, "{p:?}");
        assert_eq!(
            (p[0].line, p[0].column.as_deref()),
            (Some(2), Some("rift_onset_ma"))
        );
        assert!(
            p[0].reason
                .starts_with("1e15 Ma is out of range for an age (from 0 to 4600 Ma)"),
            "{}",
            p[0].reason
        );
        let p = parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,60,4601\n").unwrap_err();
        assert_eq!(p[0].column.as_deref(), Some("rift_end_ma"), "{p:?}");
        assert!(parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,4600,40\n").is_ok());
    }

    #[test]
    fn an_age_written_in_years_gets_the_hint() {
        let p =
            parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,145000000,40\n").unwrap_err();
        assert_eq!(p.len(), 1, "{p:?}");
        assert!(
            p[0].reason
                .ends_with("it looks like an age in years: write 145 Ma"),
            "{}",
            p[0].reason
        );
    }

    #[test]
    fn an_overlong_well_name_is_refused() {
        let name = "K".repeat(MAX_NAME_CHARS + 1);
        let file = format!("well,rift_onset_ma,rift_end_ma\n{name},60,40\n");
        let p = parse_picks(file.as_bytes()).unwrap_err();
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(2), Some("well")));
        assert!(p[0].reason.contains("characters"), "{}", p[0].reason);
    }
}
