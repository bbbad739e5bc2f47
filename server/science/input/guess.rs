//! Guessing which of a file's odd headers is which of our columns, so the upload
//! preview can offer a mapping ("Well Name" → well, "TVDSS (ft)" → depth_ft) for the
//! user to check, rather than a row of "(ignore)". Only a suggestion: nothing is read
//! with it until the user has seen it in the preview and stored the upload.

use super::columns::{FileKind, normalise};

/// Words of a header: lower case, split on anything that is not a letter or digit.
fn words(header: &str) -> Vec<String> {
    header
        .to_lowercase()
        .split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .map(str::to_string)
        .collect()
}

fn has(words: &[String], any: &[&str]) -> bool {
    words.iter().any(|w| any.contains(&w.as_str()))
}

fn starts(words: &[String], any: &[&str]) -> bool {
    words.iter().any(|w| any.iter().any(|a| w.starts_with(a)))
}

/// The column a tops-file header most likely means, by the words it uses.
fn tops_column(header: &str) -> Option<&'static str> {
    let w = words(header);
    let feet = has(&w, &["ft", "feet", "foot"]);
    let water = has(&w, &["pwd", "water", "bathymetry", "paleobathymetry", "wd"]);
    let eroded = starts(&w, &["erod", "eros", "removed"]);
    Some(if eroded && has(&w, &["age", "ma", "time", "when"]) {
        "eroded_at_ma"
    } else if eroded {
        "eroded_m"
    } else if water && has(&w, &["min", "minimum", "low", "shallow"]) {
        "water_depth_min_m"
    } else if water && has(&w, &["max", "maximum", "high", "deep"]) {
        "water_depth_max_m"
    } else if water {
        "water_depth_m"
    } else if has(&w, &["well", "uwi", "borehole", "wellbore"]) {
        "well"
    } else if has(
        &w,
        &["horizon", "surface", "top", "pick", "marker", "formation"],
    ) && !has(&w, &["depth", "tvdss", "tvd"])
    {
        "horizon"
    } else if has(&w, &["depth", "tvdss", "tvd", "z"]) {
        if feet { "depth_ft" } else { "depth_m" }
    } else if has(&w, &["age", "ma"]) {
        "age_ma"
    } else if starts(&w, &["lith", "rock"]) {
        "lithology"
    } else {
        return None;
    })
}

/// The column a wells-file header most likely means.
fn wells_column(header: &str) -> Option<&'static str> {
    let w = words(header);
    Some(
        if has(&w, &["well", "uwi", "name", "borehole", "wellbore"]) {
            "well"
        } else if has(&w, &["x", "easting", "east", "e"]) {
            "x"
        } else if has(&w, &["y", "northing", "north", "n"]) {
            "y"
        } else if starts(&w, &["lat"]) {
            "lat"
        } else if starts(&w, &["lon", "lng"]) {
            "lon"
        } else {
            return None;
        },
    )
}

/// Suggested (header, column) pairs for the headers that do not already name one of
/// our columns, each column given to at most one header (the first that fits).
pub fn guess_mapping(kind: FileKind, headers: &[String]) -> Vec<(String, String)> {
    let ours = kind.columns();
    let taken_by_name: Vec<&str> = headers
        .iter()
        .filter_map(|h| ours.iter().copied().find(|c| normalise(h) == *c))
        .collect();
    let mut taken: Vec<&str> = taken_by_name.clone();
    // Depth in metres and in feet are one column in two units.
    let same_column =
        |a: &str, b: &str| a == b || (a.starts_with("depth_") && b.starts_with("depth_"));
    let mut out = Vec::new();
    for h in headers {
        if ours.contains(&normalise(h).as_str()) {
            continue;
        }
        let guess = match kind {
            FileKind::Tops => tops_column(h),
            FileKind::Wells => wells_column(h),
            _ => None,
        };
        if let Some(column) = guess.filter(|g| !taken.iter().any(|t| same_column(t, g))) {
            taken.push(column);
            out.push((h.clone(), column.to_string()));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn headers(list: &[&str]) -> Vec<String> {
        list.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn common_odd_tops_headers_are_recognised() {
        let h = headers(&[
            "Well Name",
            "Surface",
            "TVDSS (ft)",
            "Age",
            "Lith",
            "PWD min",
            "PWD max",
            "Remark",
        ]);
        let g = guess_mapping(FileKind::Tops, &h);
        let pairs: Vec<(&str, &str)> = g.iter().map(|(a, b)| (a.as_str(), b.as_str())).collect();
        assert_eq!(
            pairs,
            [
                ("Well Name", "well"),
                ("Surface", "horizon"),
                ("TVDSS (ft)", "depth_ft"),
                ("Age", "age_ma"),
                ("Lith", "lithology"),
                ("PWD min", "water_depth_min_m"),
                ("PWD max", "water_depth_max_m"),
            ]
        );
    }

    #[test]
    fn headers_that_already_match_are_left_alone_and_no_column_is_given_twice() {
        let h = headers(&[
            "well",
            "Well ID",
            "depth_m",
            "Depth below sea (m)",
            "age_ma",
        ]);
        let g = guess_mapping(FileKind::Tops, &h);
        assert!(g.is_empty(), "{g:?}");
    }

    #[test]
    fn wells_coordinates_are_recognised() {
        let h = headers(&["Borehole", "Easting", "Northing", "Comment"]);
        let g = guess_mapping(FileKind::Wells, &h);
        assert_eq!(g.len(), 3, "{g:?}");
        assert_eq!(g[1], ("Easting".to_string(), "x".to_string()));
        assert_eq!(g[2], ("Northing".to_string(), "y".to_string()));
    }

    #[test]
    fn erosion_columns_are_told_apart() {
        let h = headers(&["Eroded thickness", "Erosion age (Ma)"]);
        let g = guess_mapping(FileKind::Tops, &h);
        assert_eq!(g[0].1, "eroded_m");
        assert_eq!(g[1].1, "eroded_at_ma");
    }
}
