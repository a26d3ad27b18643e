//! Where the program's X0 Y0 lies on the part: the work zero.
//!
//! A drawing may be placed anywhere (a part drawn at x ≈ 1000 mm, or with its corner at
//! (−22, −15)); the machine's travel is measured from the work zero the operator sets on the
//! stock. The user chooses which drawing point becomes X0 Y0: the drawing's own origin, a
//! corner or the centre of the part's box, or any drawing point. Everything to be cut is then
//! moved by the same shift before planning, so the program, the preview, the checker and the
//! report all work in the program's coordinates; the report gives the shift back.
//!
//! The part's box is the outline's (lines and arcs included exactly); a drawing with no outline
//! uses the box of everything that is cut (the holes and the solved ellipses). Z0 is not moved
//! here: it is the top of the stock (see the program header).

use crate::chain::{InnerShape, Part};
use crate::geom::{Bounds, Ellipse, Point, Vec2};
use serde::Serialize;

/// Which drawing point becomes the program's X0 Y0.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize)]
#[serde(rename_all = "kebab-case", tag = "rule")]
pub enum WorkZero {
    /// The drawing's own origin: coordinates as drawn.
    #[default]
    Drawing,
    LowerLeft,
    LowerRight,
    UpperLeft,
    UpperRight,
    /// The centre of the part's box.
    Centre,
    /// A drawing point (mm).
    At {
        x: f64,
        y: f64,
    },
}

/// Each named work zero with its word, as the command line and the job file write it.
pub const ZERO_WORDS: [(&str, WorkZero); 6] = [
    ("drawing", WorkZero::Drawing),
    ("lower-left", WorkZero::LowerLeft),
    ("lower-right", WorkZero::LowerRight),
    ("upper-left", WorkZero::UpperLeft),
    ("upper-right", WorkZero::UpperRight),
    ("centre", WorkZero::Centre),
];

/// The work zero found on a part: the drawing point that becomes X0 Y0 and what it is, in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlacedZero {
    /// The rule asked for.
    #[serde(flatten)]
    pub rule: WorkZero,
    /// The drawing point that is X0 Y0 in the program (mm).
    pub drawing_point: Point,
    /// What program coordinates are: drawing coordinates plus this (mm), the drawing point
    /// negated.
    pub shift: Vec2,
    /// Where X0 Y0 is, in words: `the lower-left corner of the outline's box`.
    pub words: String,
}

/// Why no work zero could be placed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ZeroError {
    #[error(
        "the work zero \"{0}\" is a corner or the centre of the part's box, but the drawing has \
         nothing to cut to take a box from; use --zero drawing or --zero X,Y"
    )]
    NoBox(&'static str),
    #[error("the work zero ({x}, {y}) is not a finite drawing point")]
    NotFinite { x: f64, y: f64 },
}

impl WorkZero {
    /// The word for a named zero, or `X,Y` for a point.
    pub fn word(&self) -> String {
        match self {
            WorkZero::At { x, y } => format!("{x},{y}"),
            named => ZERO_WORDS
                .iter()
                .find(|(_, z)| z == named)
                .map_or_else(String::new, |(w, _)| w.to_string()),
        }
    }

    /// Where this zero sits on `part` (whose solved elliptical features are `ellipses`).
    pub fn place(&self, part: &Part, ellipses: &[Ellipse]) -> Result<PlacedZero, ZeroError> {
        let (point, words) = match *self {
            WorkZero::Drawing => (Point::ORIGIN, "the drawing's origin".to_string()),
            WorkZero::At { x, y } => {
                if !(x.is_finite() && y.is_finite()) {
                    return Err(ZeroError::NotFinite { x, y });
                }
                (
                    Point::new(x, y),
                    format!("the drawing point at x {x}, y {y}"),
                )
            }
            named => {
                let (b, whose) = part_box(part, ellipses).ok_or_else(|| {
                    ZeroError::NoBox(
                        ZERO_WORDS
                            .iter()
                            .find(|(_, z)| *z == named)
                            .map_or("", |w| w.0),
                    )
                })?;
                let (point, what) = match named {
                    WorkZero::LowerLeft => (b.min, "the lower-left corner"),
                    WorkZero::LowerRight => {
                        (Point::new(b.max.x, b.min.y), "the lower-right corner")
                    }
                    WorkZero::UpperLeft => (Point::new(b.min.x, b.max.y), "the upper-left corner"),
                    WorkZero::UpperRight => (b.max, "the upper-right corner"),
                    _ => (b.min.midpoint(b.max), "the centre"),
                };
                (point, format!("{what} of {whose}"))
            }
        };
        Ok(PlacedZero {
            rule: *self,
            drawing_point: point,
            shift: Point::ORIGIN - point,
            words,
        })
    }
}

/// The part's box and whose box it is: the outline's, else that of everything cut.
fn part_box(part: &Part, ellipses: &[Ellipse]) -> Option<(Bounds, &'static str)> {
    if let Some(b) = part.outline.as_ref().and_then(|o| o.bounding_box()) {
        return Some((b, "the outline's box"));
    }
    let holes = part.holes.iter().filter_map(|h| match &h.shape {
        InnerShape::Contour(c) => c.bounding_box(),
        InnerShape::Ellipse(e) => Some(e.bounding_box()),
    });
    let solved = ellipses.iter().map(Ellipse::bounding_box);
    holes
        .chain(solved)
        .reduce(Bounds::union)
        .map(|b| (b, "the box of everything cut (the drawing has no outline)"))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::{Contour, Element, Segment};

    fn rectangle(x0: f64, y0: f64, x1: f64, y1: f64) -> Contour {
        let p = [
            Point::new(x0, y0),
            Point::new(x1, y0),
            Point::new(x1, y1),
            Point::new(x0, y1),
        ];
        let elements = (0..4)
            .map(|i| Element::Line(Segment::new(p[i], p[(i + 1) % 4])))
            .collect();
        Contour::new(elements, "OUTLINE", vec![]).unwrap()
    }

    #[test]
    fn each_rule_names_its_point_of_the_outline_box() {
        let part = Part {
            outline: Some(rectangle(-22.0, -15.0, 978.0, 385.0)),
            ..Part::default()
        };
        let at = |z: WorkZero| z.place(&part, &[]).unwrap().drawing_point;
        assert_eq!(at(WorkZero::Drawing), Point::ORIGIN);
        assert_eq!(at(WorkZero::LowerLeft), Point::new(-22.0, -15.0));
        assert_eq!(at(WorkZero::LowerRight), Point::new(978.0, -15.0));
        assert_eq!(at(WorkZero::UpperLeft), Point::new(-22.0, 385.0));
        assert_eq!(at(WorkZero::UpperRight), Point::new(978.0, 385.0));
        assert_eq!(at(WorkZero::Centre), Point::new(478.0, 185.0));
        assert_eq!(at(WorkZero::At { x: 5.0, y: 6.0 }), Point::new(5.0, 6.0));
        let placed = WorkZero::LowerLeft.place(&part, &[]).unwrap();
        assert_eq!(placed.shift, Vec2::new(22.0, 15.0));
        assert_eq!(placed.words, "the lower-left corner of the outline's box");
    }

    #[test]
    fn without_an_outline_the_box_holds_everything_cut() {
        // An ellipse of semi-axes 10 and 4 turned 90° spans x ± 4, y ± 10.
        let e = Ellipse::new(
            Point::new(100.0, 50.0),
            10.0,
            4.0,
            std::f64::consts::FRAC_PI_2,
        )
        .unwrap();
        let placed = WorkZero::LowerLeft.place(&Part::default(), &[e]).unwrap();
        assert!(placed.drawing_point.distance(Point::new(96.0, 40.0)) < 1e-12);
        assert!(placed.words.contains("everything cut"));
        assert!(matches!(
            WorkZero::Centre.place(&Part::default(), &[]),
            Err(ZeroError::NoBox("centre"))
        ));
        assert!(
            WorkZero::At {
                x: f64::NAN,
                y: 0.0
            }
            .place(&Part::default(), &[])
            .is_err()
        );
    }

    #[test]
    fn words_round_trip() {
        for (w, z) in ZERO_WORDS {
            assert_eq!(z.word(), w);
        }
        assert_eq!(WorkZero::At { x: 1.5, y: -2.0 }.word(), "1.5,-2");
    }
}
