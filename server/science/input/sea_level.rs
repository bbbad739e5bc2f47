//! The sea-level file: the study's eustatic curve, sea level above present by age.

use super::bounds::{AGE_MA, SEA_LEVEL_M};
use super::columns::{ColumnMapping, Columns, FileKind};
use super::problems::InputProblem;
use super::table::ReadFile;
use crate::{SeaLevelCurve, SeaLevelPoint};

/// Read a sea-level file: `age_ma` (not negative) and `sea_level_m` (above present,
/// m). Two points at one age, and numbers that are not finite, are refused.
/// Other columns are ignored ([`super::preview`] lists them).
pub fn parse_sea_level(bytes: &[u8]) -> Result<SeaLevelCurve, Vec<InputProblem>> {
    parse_sea_level_read(&ReadFile::read(
        bytes,
        FileKind::SeaLevel.default_file_name(),
    ))
}

/// [`parse_sea_level`] on a file read before (problems carry its name).
pub fn parse_sea_level_read(read: &ReadFile) -> Result<SeaLevelCurve, Vec<InputProblem>> {
    let (table, columns, mut problems) =
        Columns::open_read(read, FileKind::SeaLevel, &ColumnMapping::new())?;
    let (age, level) = (columns.field("age_ma"), columns.field("sea_level_m"));
    let mut points: Vec<(SeaLevelPoint, usize)> = Vec::with_capacity(table.rows.len());
    for row in table.rows.iter().filter(|r| r.complete) {
        let age_ma = age.required_number(row, &mut problems);
        let sea_level_m = level
            .required_number(row, &mut problems)
            .and_then(|v| level.within(row, &mut problems, v, &SEA_LEVEL_M, None));
        if let Some(a) = age_ma.filter(|&a| a < 0.0) {
            age.problem(
                row,
                &mut problems,
                format!("{a} Ma is negative; ages are millions of years before present"),
            );
            continue;
        }
        let age_ma = age_ma.and_then(|a| age.within(row, &mut problems, a, &AGE_MA, None));
        if let (Some(age_ma), Some(sea_level_m)) = (age_ma, sea_level_m) {
            points.push((
                SeaLevelPoint {
                    age_ma,
                    sea_level_m,
                },
                row.line,
            ));
        }
    }
    points.sort_by(|a, b| a.0.age_ma.total_cmp(&b.0.age_ma).then(a.1.cmp(&b.1)));
    for pair in points.windows(2) {
        let ((first, first_line), (second, line)) = (pair[0], pair[1]);
        if first.age_ma == second.age_ma {
            problems.at(
                line,
                Some(age.label()),
                format!(
                    "{} Ma already has a sea level (line {first_line}); give each age once",
                    second.age_ma
                ),
            );
        }
    }
    if !problems.is_empty() {
        return Err(problems.finish());
    }
    match SeaLevelCurve::new(points.into_iter().map(|(p, _)| p).collect()) {
        Ok(curve) => Ok(curve),
        Err(e) => {
            problems.whole_file(e.to_string());
            Err(problems.finish())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_curve_is_read_in_any_row_order() {
        let curve =
            parse_sea_level(b"Sea_Level_M,AGE_MA,comment\n120,90,high stand\n0,0,\n-40.5,20,\n")
                .unwrap();
        let points: Vec<_> = curve
            .points()
            .iter()
            .map(|p| (p.age_ma, p.sea_level_m))
            .collect();
        assert_eq!(points, [(0.0, 0.0), (20.0, -40.5), (90.0, 120.0)]);
    }

    #[test]
    fn two_points_at_one_age_are_refused() {
        let p = parse_sea_level(b"age_ma,sea_level_m\n10,5\n20,8\n10,6\n").unwrap_err();
        assert_eq!(p.len(), 1);
        assert_eq!(
            (p[0].line, p[0].column.as_deref()),
            (Some(4), Some("age_ma"))
        );
        assert_eq!(
            p[0].reason,
            "10 Ma already has a sea level (line 2); give each age once"
        );
    }

    #[test]
    fn non_finite_values_are_refused() {
        let p = parse_sea_level(b"age_ma,sea_level_m\n10,inf\nNaN,3\n").unwrap_err();
        let at: Vec<_> = p.iter().map(|p| (p.line, p.column.as_deref())).collect();
        assert_eq!(
            at,
            [(Some(2), Some("sea_level_m")), (Some(3), Some("age_ma"))]
        );
        assert_eq!(p[0].reason, "\"inf\" is not a finite number");
    }

    #[test]
    fn a_negative_age_is_refused() {
        let p = parse_sea_level(b"age_ma,sea_level_m\n-1,3\n").unwrap_err();
        assert_eq!(
            (p[0].line, p[0].column.as_deref()),
            (Some(2), Some("age_ma"))
        );
    }

    #[test]
    fn a_missing_column_is_refused_at_the_header() {
        let p = parse_sea_level(b"age_ma,level\n1,3\n").unwrap_err();
        assert_eq!(p[0].line, Some(1));
        assert!(
            p[0].reason
                .starts_with("the required column sea_level_m is missing"),
            "{}",
            p[0]
        );
    }

    #[test]
    fn impossible_sea_levels_and_ages_are_refused() {
        let p = parse_sea_level(b"age_ma,sea_level_m\n0,0\n10,5000\n1e12,3\n").unwrap_err();
        let at: Vec<_> = p.iter().map(|p| (p.line, p.column.as_deref())).collect();
        assert_eq!(
            at,
            [(Some(3), Some("sea_level_m")), (Some(4), Some("age_ma"))]
        );
        assert!(
            p[0].reason
                .starts_with("5000 m is out of range for a sea level")
        );
        assert!(
            p[1].reason
                .starts_with("1e12 Ma is out of range for an age")
        );
    }
}
