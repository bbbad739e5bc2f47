//! The picks file: a rift onset and rift end chosen by hand for some wells (one or two
//! rift events each), which the analysis uses instead of its own proposal.

use super::bounds::{AGE_MA, MAX_NAME_CHARS};
use super::columns::{ColumnMapping, Columns, FileKind};
use super::problems::{InputProblem, Problems};
use serde::{Deserialize, Serialize};
use std::collections::HashMap;
use std::collections::hash_map::Entry;

/// Most rift events a well may be given (the uniform fits take one or two).
pub const MAX_EVENTS: u8 = 2;

/// A well's rift interval as picked: onset older (larger Ma) than end.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RiftPick {
    pub well: String,
    /// Which of the well's rift events: 1 (the older) or 2; 1 when the file has no
    /// `event` column.
    pub event: u8,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    /// The line of the file the pick was read from, for problems found later (a
    /// well that is not in the tops file).
    pub line: usize,
}

/// Read a picks file: `well`, `rift_onset_ma`, `rift_end_ma` and optionally `event`
/// (1 or 2: a well may have two rift events, the second starting no earlier than the
/// first ends), one row per well and event; both ages not negative, within the age of
/// the Earth ([`AGE_MA`]), and the onset older than the end; well names of at most
/// [`MAX_NAME_CHARS`]. Other columns are ignored. Picks come back ordered by well as
/// first met, then event.
pub fn parse_picks(bytes: &[u8]) -> Result<Vec<RiftPick>, Vec<InputProblem>> {
    let (table, columns, mut problems) = Columns::open(
        bytes,
        FileKind::Picks,
        &ColumnMapping::new(),
        Problems::new(FileKind::Picks.default_file_name()),
    )?;
    let (well, onset, end, event_field) = (
        columns.field("well"),
        columns.field("rift_onset_ma"),
        columns.field("rift_end_ma"),
        columns.field("event"),
    );
    let mut picks = Vec::with_capacity(table.rows.len());
    let mut first_line: HashMap<(&str, u8), usize> = HashMap::new();
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
        let event = if event_field.is_present() && !event_field.text(row).is_empty() {
            match event_field.text(row).parse::<u8>() {
                Ok(e) if (1..=MAX_EVENTS).contains(&e) => e,
                _ => {
                    event_field.problem(
                        row,
                        &mut problems,
                        format!(
                            "\"{}\" is not a rift event number: use 1 (the older event) or 2",
                            event_field.text(row)
                        ),
                    );
                    continue;
                }
            }
        } else {
            1
        };
        let Some(name) = name else { continue };
        match first_line.entry((name, event)) {
            Entry::Occupied(first) => well.problem(
                row,
                &mut problems,
                if event_field.is_present() {
                    format!(
                        "well \"{name}\" already has a pick for event {event} (line {})",
                        first.get()
                    )
                } else {
                    format!("well \"{name}\" already has a pick (line {}); add an event column (1 or 2) for a second rift event", first.get())
                },
            ),
            Entry::Vacant(v) => {
                v.insert(row.line);
            }
        }
        if let [Some(rift_onset_ma), Some(rift_end_ma)] = ages {
            picks.push(RiftPick {
                well: name.to_string(),
                event,
                rift_onset_ma,
                rift_end_ma,
                line: row.line,
            });
        }
    }
    // A second event needs a first, and comes after it.
    for pick in picks.iter().filter(|p| p.event == 2) {
        let first = picks.iter().find(|p| p.well == pick.well && p.event == 1);
        match first {
            None => problems.at(
                pick.line,
                Some(event_field.label()),
                format!("well \"{}\" has an event 2 but no event 1", pick.well),
            ),
            Some(first) if pick.rift_onset_ma > first.rift_end_ma => problems.at(
                pick.line,
                Some(onset.label()),
                format!(
                    "event 2 of well \"{}\" starts at {} Ma, before event 1 ends ({} Ma, line {}); the second event must start when or after the first ends",
                    pick.well, pick.rift_onset_ma, first.rift_end_ma, first.line
                ),
            ),
            Some(_) => {}
        }
    }
    // Ordered by well as first met, then event (stable, so one well's rows stay together).
    let mut first_seen: HashMap<&str, usize> = HashMap::new();
    for (i, p) in picks.iter().enumerate() {
        first_seen.entry(p.well.as_str()).or_insert(i);
    }
    let rank: Vec<(usize, u8)> = picks
        .iter()
        .map(|p| (first_seen[p.well.as_str()], p.event))
        .collect();
    let mut order: Vec<usize> = (0..picks.len()).collect();
    order.sort_by_key(|&i| rank[i]);
    let sorted: Vec<RiftPick> = order.into_iter().map(|i| picks[i].clone()).collect();
    problems.result(sorted)
}

/// The picked timings of one well, `(onset_ma, end_ma)` oldest event first, or `None`
/// when the file has no pick for it.
pub fn timings_of(picks: &[RiftPick], well: &str) -> Option<Vec<(f64, f64)>> {
    let timings: Vec<(f64, f64)> = picks
        .iter()
        .filter(|p| p.well == well)
        .map(|p| (p.rift_onset_ma, p.rift_end_ma))
        .collect();
    (!timings.is_empty()).then_some(timings)
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
                    event: 1,
                    well: "Kestrel-1".into(),
                    rift_onset_ma: 165.5,
                    rift_end_ma: 140.0,
                    line: 2,
                },
                RiftPick {
                    event: 1,
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
        assert!(
            p[0].reason
                .starts_with("well \"Kestrel-1\" already has a pick (line 2)"),
            "{}",
            p[0].reason
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

    #[test]
    fn a_second_event_is_read_with_an_event_column() {
        let picks = parse_picks(
            b"well,event,rift_onset_ma,rift_end_ma\nKestrel-1,2,80,70\nPlover-2,1,30,20\nKestrel-1,1,200,185\n",
        )
        .unwrap();
        let order: Vec<(&str, u8)> = picks.iter().map(|p| (p.well.as_str(), p.event)).collect();
        assert_eq!(order, [("Kestrel-1", 1), ("Kestrel-1", 2), ("Plover-2", 1)]);
        assert_eq!(
            timings_of(&picks, "Kestrel-1"),
            Some(vec![(200.0, 185.0), (80.0, 70.0)])
        );
        assert_eq!(timings_of(&picks, "Tern-3"), None);
    }

    #[test]
    fn event_numbers_and_order_are_checked() {
        let bad =
            parse_picks(b"well,event,rift_onset_ma,rift_end_ma\nKestrel-1,3,80,70\n").unwrap_err();
        assert_eq!(
            (bad[0].line, bad[0].column.as_deref()),
            (Some(2), Some("event"))
        );
        assert!(bad[0].reason.contains("use 1"), "{}", bad[0].reason);
        let orphan =
            parse_picks(b"well,event,rift_onset_ma,rift_end_ma\nKestrel-1,2,80,70\n").unwrap_err();
        assert!(
            orphan[0].reason.contains("no event 1"),
            "{}",
            orphan[0].reason
        );
        let overlap = parse_picks(
            b"well,event,rift_onset_ma,rift_end_ma\nKestrel-1,1,200,150\nKestrel-1,2,160,140\n",
        )
        .unwrap_err();
        assert_eq!(overlap[0].line, Some(3));
        assert!(
            overlap[0].reason.contains("before event 1 ends"),
            "{}",
            overlap[0].reason
        );
        let twice =
            parse_picks(b"well,rift_onset_ma,rift_end_ma\nKestrel-1,200,150\nKestrel-1,100,90\n")
                .unwrap_err();
        assert!(
            twice[0].reason.contains("add an event column"),
            "{}",
            twice[0].reason
        );
    }
}
