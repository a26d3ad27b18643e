//! Measured points (probe or scan data) from CSV text.
//!
//! # Format
//!
//! One point per line, `x` then `y`, separated by a comma, a semicolon or white space:
//!
//! ```text
//! # probe run 3, part 17        ← comment (anything after `#` is ignored)
//! x, y                          ← optional header: one line of names (each with a letter),
//!                                 before the data
//! 65.685, 6.384
//! 60.655; 9.014
//! 52.851   9.249
//!                               ← blank lines are skipped
//! ```
//!
//! A line that holds a semicolon is split at semicolons, else one that holds a comma at commas
//! (surrounding spaces are trimmed), else on white space. Each data line must hold exactly two numbers: a third
//! column (a probe's z, say) is refused rather than dropped, so that a file with its columns in
//! another order is not read wrongly. The decimal mark is the point (`1.5`, not `1,5`).
//!
//! # Units
//!
//! The numbers are in the unit the caller states ([`Units`]); they are converted to millimetres
//! here. Nothing is guessed: the file itself carries no unit.

use super::Units;
use crate::geom::Point;

/// What is wrong with a points file, and where.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{file}{}: {problem}", line.map(|l| format!(", line {l}")).unwrap_or_default())]
pub struct PointsError {
    /// The file's name as given by the caller.
    pub file: String,
    /// The 1-based line, when the problem is on one line.
    pub line: Option<usize>,
    pub problem: PointsProblem,
}

/// The problems a points file can have.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PointsProblem {
    #[error(
        "'{field}' is not a number; each line must be 'x, y' with a point as decimal mark (a \
         header line of column names is allowed only before the first point)"
    )]
    NotANumber { field: String },
    #[error("'{field}' is not a finite number; remove the line or fix the value")]
    NotFinite { field: String },
    #[error(
        "expected two values (x and y) but found {found}; give exactly 'x, y' on each line (remove \
         any z or index column)"
    )]
    WrongFieldCount { found: usize },
    #[error("an empty value between separators; give exactly 'x, y' on each line")]
    EmptyField,
    #[error("the file holds no points; give one 'x, y' pair per line")]
    NoPoints,
}

/// Reads points from CSV text (format in the module docs), converting them from `units` to mm.
/// `file_name` is used in messages only.
///
/// ```
/// use conicut::read::{Units, parse_points_csv};
///
/// let points = parse_points_csv("x,y\n1, 2\n# comment\n3;4.5\n", "scan.csv", Units::Inches).unwrap();
/// assert_eq!(points.len(), 2);
/// assert_eq!(points[1].y, 4.5 * 25.4);
/// ```
pub fn parse_points_csv(
    text: &str,
    file_name: &str,
    units: Units,
) -> Result<Vec<Point>, PointsError> {
    let error = |line: Option<usize>, problem| PointsError {
        file: file_name.to_string(),
        line,
        problem,
    };
    let scale = units.mm_per_unit();
    let mut points = Vec::new();
    let mut header_allowed = true;
    for (index, raw) in text.lines().enumerate() {
        let line = index + 1;
        let content = raw.split('#').next().unwrap_or("").trim();
        // A byte-order mark at the start of the file is not part of the data.
        let content = content.trim_start_matches('\u{feff}').trim();
        if content.is_empty() {
            continue;
        }
        let fields: Vec<&str> = if content.contains(';') {
            content.split(';').map(str::trim).collect()
        } else if content.contains(',') {
            content.split(',').map(str::trim).collect()
        } else {
            content.split_whitespace().collect()
        };
        let parsed: Vec<Option<f64>> = fields.iter().map(|f| f.parse::<f64>().ok()).collect();
        let is_names = parsed.iter().all(Option::is_none)
            && fields.iter().all(|f| f.chars().any(char::is_alphabetic));
        if header_allowed && is_names {
            // The header: a line of names (each with a letter), before any data.
            header_allowed = false;
            continue;
        }
        header_allowed = false;
        if fields.len() != 2 {
            return Err(error(
                Some(line),
                PointsProblem::WrongFieldCount {
                    found: fields.len(),
                },
            ));
        }
        let mut xy = [0.0; 2];
        for (slot, (field, value)) in xy.iter_mut().zip(fields.iter().zip(&parsed)) {
            if field.is_empty() {
                return Err(error(Some(line), PointsProblem::EmptyField));
            }
            let value = value.ok_or_else(|| {
                error(
                    Some(line),
                    PointsProblem::NotANumber {
                        field: field.to_string(),
                    },
                )
            })?;
            if !value.is_finite() {
                return Err(error(
                    Some(line),
                    PointsProblem::NotFinite {
                        field: field.to_string(),
                    },
                ));
            }
            *slot = value * scale;
        }
        points.push(Point::new(xy[0], xy[1]));
    }
    if points.is_empty() {
        return Err(error(None, PointsProblem::NoPoints));
    }
    Ok(points)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<Vec<Point>, PointsError> {
        parse_points_csv(text, "scan.csv", Units::Millimetres)
    }

    #[test]
    fn reads_every_separator_header_comments_and_blank_lines() {
        let text = "# probe run 3\n\nx, y\n1.5, -2\n3;4 # after a comment\n  5\t6.25  \n7 ; 8\n";
        let points = read(text).unwrap();
        assert_eq!(
            points,
            vec![
                Point::new(1.5, -2.0),
                Point::new(3.0, 4.0),
                Point::new(5.0, 6.25),
                Point::new(7.0, 8.0),
            ]
        );
    }

    #[test]
    fn converts_inches_to_mm() {
        // The inch is exactly 25.4 mm (international yard and pound agreement, 1959).
        let points = parse_points_csv("1, -0.5\n2 3\n", "probe.csv", Units::Inches).unwrap();
        let want = [(25.4, -12.7), (50.8, 76.2)];
        assert_eq!(points.len(), 2);
        for (p, (x, y)) in points.iter().zip(want) {
            // 1e-12 mm: the products are rounded to the nearest double.
            assert!((p.x - x).abs() < 1e-12 && (p.y - y).abs() < 1e-12, "{p:?}");
        }
    }

    #[test]
    fn a_second_line_of_names_is_an_error_with_its_line() {
        let err = read("x,y\n1,2\nx,y\n").unwrap_err();
        assert_eq!(err.line, Some(3));
        assert!(matches!(err.problem, PointsProblem::NotANumber { ref field } if field == "x"));
        assert_eq!(err.file, "scan.csv");
        let message = err.to_string();
        assert!(
            message.starts_with("scan.csv, line 3: 'x' is not a number"),
            "{message}"
        );
    }

    #[test]
    fn a_bad_number_names_the_line_and_the_text() {
        let err = read("1,2\n3,4\n5,4.2.1\n").unwrap_err();
        assert_eq!(err.line, Some(3));
        assert_eq!(
            err.problem,
            PointsProblem::NotANumber {
                field: "4.2.1".into()
            }
        );
    }

    #[test]
    fn a_decimal_comma_is_refused_not_misread() {
        let err = read("1,5;2,25\n").unwrap_err();
        assert_eq!(err.line, Some(1));
        assert_eq!(
            err.problem,
            PointsProblem::NotANumber {
                field: "1,5".into()
            }
        );
    }

    #[test]
    fn three_columns_are_refused() {
        let err = read("x,y,z\n1,2,3\n").unwrap_err();
        assert_eq!(err.line, Some(2));
        assert_eq!(err.problem, PointsProblem::WrongFieldCount { found: 3 });
        let err = read("1\n").unwrap_err();
        assert_eq!(err.problem, PointsProblem::WrongFieldCount { found: 1 });
    }

    #[test]
    fn empty_values_and_non_finite_numbers_are_refused() {
        let err = read("1,2\n,3\n").unwrap_err();
        assert_eq!(
            (err.line, err.problem),
            (Some(2), PointsProblem::EmptyField)
        );
        let err = read("1,2\n3,NaN\n").unwrap_err();
        assert_eq!(
            (err.line, err.problem),
            (
                Some(2),
                PointsProblem::NotFinite {
                    field: "NaN".into()
                }
            )
        );
        let err = read("inf 1\n").unwrap_err();
        assert!(matches!(err.problem, PointsProblem::NotFinite { .. }));
    }

    #[test]
    fn a_file_without_points_is_refused() {
        let err = read("# nothing measured\nx,y\n\n").unwrap_err();
        assert_eq!((err.line, &err.problem), (None, &PointsProblem::NoPoints));
        assert_eq!(
            err.to_string(),
            "scan.csv: the file holds no points; give one 'x, y' pair per line"
        );
    }
}
