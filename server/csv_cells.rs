//! Every CSV Sagline writes (downloads, `sagline analyze`, `sagline section`) goes
//! through [`write_row`](crate::csv_cells::write_row), so no cell opens in a spreadsheet as a live formula.
//!
//! The rule is the usual one for CSV injection (OWASP, "CSV Injection"): a text cell
//! beginning with `=`, `+`, `-`, `@`, a tab or a carriage return gets a leading `'`,
//! which spreadsheets read as "this is text". A cell that is a finite number (`-12.5`,
//! `+3`, `1e-3`) is left as it is, so numbers stay numbers.

use std::borrow::Cow;

/// The characters that make a spreadsheet read a cell as a formula.
const FORMULA_STARTS: [char; 6] = ['=', '+', '-', '@', '\t', '\r'];

/// `cell`, with a `'` in front when it would otherwise be read as a formula.
pub fn neutralise(cell: &str) -> Cow<'_, str> {
    let risky = cell.starts_with(FORMULA_STARTS);
    let number = || cell.parse::<f64>().is_ok_and(f64::is_finite);
    if risky && !number() {
        Cow::Owned(format!("'{cell}"))
    } else {
        Cow::Borrowed(cell)
    }
}

/// Write one record, each cell passed through [`neutralise`].
pub fn write_row<W, I, T>(w: &mut csv::Writer<W>, row: I) -> csv::Result<()>
where
    W: std::io::Write,
    I: IntoIterator<Item = T>,
    T: AsRef<str>,
{
    w.write_record(row.into_iter().map(|c| neutralise(c.as_ref()).into_owned()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_formula_start_is_prefixed() {
        // The list of OWASP's "CSV Injection" page: =, +, -, @, tab, carriage return.
        for (cell, expected) in [
            ("=HYPERLINK(\"x\")", "'=HYPERLINK(\"x\")"),
            ("+cmd", "'+cmd"),
            ("-2+3", "'-2+3"),
            ("@SUM(A1)", "'@SUM(A1)"),
            ("\tleading tab", "'\tleading tab"),
            ("\rleading return", "'\rleading return"),
        ] {
            assert_eq!(neutralise(cell), expected, "{cell:?}");
        }
    }

    #[test]
    fn finite_numbers_stay_numbers() {
        for cell in ["-12.5", "+3", "-0", "-1e-3", "-4500.000", "12.5", "0"] {
            assert_eq!(neutralise(cell), cell, "{cell:?}");
        }
    }

    #[test]
    fn things_that_only_look_like_numbers_are_text() {
        // Not finite, or not a number at all: treated as text.
        for (cell, expected) in [
            ("-inf", "'-inf"),
            ("-NaN", "'-NaN"),
            ("+infinity", "'+infinity"),
            ("-12.5 m", "'-12.5 m"),
            ("- 3", "'- 3"),
            ("-", "'-"),
        ] {
            assert_eq!(neutralise(cell), expected, "{cell:?}");
        }
    }

    #[test]
    fn ordinary_text_is_unchanged() {
        for cell in [
            "Tarn-1",
            "Top Sand",
            "",
            "# study: Veyra",
            " =not first",
            "a=b",
        ] {
            assert_eq!(neutralise(cell), cell, "{cell:?}");
        }
    }

    #[test]
    fn written_rows_are_quoted_and_neutralised() {
        let mut w = csv::Writer::from_writer(Vec::new());
        write_row(&mut w, ["=1+1", "-7.25", "a,\"b\"", "@x"]).expect("write");
        let text = String::from_utf8(w.into_inner().expect("flush")).expect("UTF-8");
        assert_eq!(text, "'=1+1,-7.25,\"a,\"\"b\"\"\",'@x\n");
    }
}
