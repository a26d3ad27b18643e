//! The openings' layout on the part, checked before any cut is planned: an opening that breaks
//! through the outline or lies outside it, and openings that overlap each other or a drawn hole
//! are refused with the features and a place, since a shop would scrap such a part (the web
//! between two openings, or between an opening and the edge, would be cut away). A bay drawn
//! twice (a copy left on top of itself, common in drawings from the office) gives the same
//! opening twice: it is cut once, and the plan says which copy was left out and where
//! ([`Twin`]); the same opening asked for as two different cuts (a hole and a boss, say) is
//! refused.
//!
//! Each shape's edge is taken at [`EDGE_SAMPLES`] points (ellipses evenly in the eccentric
//! anomaly, contours per element) and tested against the other shape's inside (its exact
//! implicit test). Two shapes overlap when a point of either lies inside the other. A crossing
//! that no sample of either shape falls into can slip through: a shallow one (thinner than a
//! sample step's sagitta), or two slender shapes crossing between samples (the samples are
//! about 2π·a/192 ≈ 0.033·a apart, so shapes narrower than that, aspect ratios over about 30:1,
//! may cross unseen). The checker's gouge test on the written program catches those then. Pairs are found through a [`BoxGrid`] of the shapes' boxes: no shape is
//! compared with every other.

use super::Opening;
use crate::chain::{InnerShape, Part};
use crate::geom::{Bounds, BoxGrid, Contour, Element, Ellipse, Point};
use std::f64::consts::TAU;

/// Points per ellipse edge; per arc of a contour, a quarter as many (lines: their two ends and
/// the middle).
pub const EDGE_SAMPLES: usize = 192;

/// Two ellipses closer than this (mm) in centre, semi-axes and orientation are the same opening
/// drawn twice.
const SAME_MM: f64 = 1e-6;

/// Why the layout cannot be cut.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LayoutError {
    #[error(
        "{feature} breaks through the part's outline near {at}: the edge between them would be \
         cut away and the part scrapped. Make the opening smaller (a margin, a smaller rule) or \
         move its bay inside the outline"
    )]
    ThroughOutline { feature: String, at: String },
    #[error(
        "{feature} lies outside the part's outline (its centre {at}): it would be cut in the \
         scrap. Move its bay inside the outline, or onto a layer that is not cut"
    )]
    OutsideOutline { feature: String, at: String },
    #[error(
        "{a} and {b} overlap near {at}: the web between them would be cut away. Draw the bays \
         apart, or give them margins or smaller ellipses in a job file"
    )]
    Overlap { a: String, b: String, at: String },
    #[error(
        "{a} and {b} are the same opening (centre {at}) asked for as two different cuts (a bay \
         drawn twice, or two rules giving one ellipse). Delete one of the bays, or give one of \
         them another rule in the job file"
    )]
    Duplicate { a: String, b: String, at: String },
}

/// An opening drawn twice: the later copy (`dropped`, an index into the openings) is the same
/// ellipse with the same cut as `kept`, and is left out.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Twin {
    pub kept: usize,
    pub dropped: usize,
    pub centre: Point,
}

impl Twin {
    /// The plan's warning: which copy was left out, and where.
    pub fn warning(&self, openings: &[Opening]) -> String {
        format!(
            "{} is the same opening as {} (centre {}): a bay drawn twice. It is cut once; \
             delete the copy from the drawing to quiet this warning",
            openings[self.dropped].name,
            openings[self.kept].name,
            at(self.centre)
        )
    }
}

fn at(p: Point) -> String {
    format!("({:.3}, {:.3}) mm", p.x, p.y)
}

/// A shape of the layout: its name, its edge's points, its box and its inside.
struct Shape<'a> {
    name: &'a str,
    edge: Vec<Point>,
    bounds: Bounds,
    inside: Inside<'a>,
}

enum Inside<'a> {
    Ellipse(&'a Ellipse),
    Contour(&'a Contour),
}

impl Inside<'_> {
    fn contains(&self, p: Point) -> bool {
        match self {
            Inside::Ellipse(e) => e.contains(p),
            Inside::Contour(c) => c.contains(p),
        }
    }
}

fn ellipse_points(e: &Ellipse) -> Vec<Point> {
    (0..EDGE_SAMPLES)
        .map(|k| e.point(TAU * k as f64 / EDGE_SAMPLES as f64))
        .collect()
}

fn contour_points(c: &Contour) -> Vec<Point> {
    c.elements()
        .iter()
        .flat_map(|el| {
            let n = match el {
                Element::Line(_) => 2,
                Element::Arc(_) => EDGE_SAMPLES / 4,
            };
            (0..n).map(move |k| el.point_at(k as f64 / n as f64))
        })
        .collect()
}

fn bounds_of(points: &[Point]) -> Bounds {
    Bounds::of_points(points).unwrap_or(Bounds {
        min: Point::ORIGIN,
        max: Point::ORIGIN,
    })
}

fn same(a: &Ellipse, b: &Ellipse) -> bool {
    let angle = (a.angle() - b.angle()).rem_euclid(std::f64::consts::PI);
    let angle_off = angle.min(std::f64::consts::PI - angle) * a.a().max(1.0);
    a.centre().distance(b.centre()) <= SAME_MM
        && (a.a() - b.a()).abs() <= SAME_MM
        && (a.b() - b.b()).abs() <= SAME_MM
        && (angle_off <= SAME_MM || (a.a() - a.b()).abs() <= SAME_MM)
}

/// Checks the openings against the outline, each other and the drawn holes (module docs); the
/// openings drawn twice, in the order found, each to be cut once.
pub fn check_layout(part: &Part, openings: &[Opening]) -> Result<Vec<Twin>, LayoutError> {
    let mut shapes: Vec<Shape> = openings
        .iter()
        .map(|o| {
            let edge = ellipse_points(&o.ellipse);
            Shape {
                name: &o.name,
                bounds: bounds_of(&edge),
                edge,
                inside: Inside::Ellipse(&o.ellipse),
            }
        })
        .collect();
    if let Some(outline) = &part.outline {
        for (o, s) in openings.iter().zip(&shapes) {
            let out: Vec<&Point> = s.edge.iter().filter(|p| !outline.contains(**p)).collect();
            if out.len() == s.edge.len() && !outline.contains(o.ellipse.centre()) {
                return Err(LayoutError::OutsideOutline {
                    feature: o.name.clone(),
                    at: at(o.ellipse.centre()),
                });
            }
            if let Some(p) = out.first() {
                return Err(LayoutError::ThroughOutline {
                    feature: o.name.clone(),
                    at: at(**p),
                });
            }
        }
    }
    for h in &part.holes {
        let (edge, inside) = match &h.shape {
            InnerShape::Contour(c) => (contour_points(c), Inside::Contour(c)),
            InnerShape::Ellipse(e) => (ellipse_points(e), Inside::Ellipse(e)),
        };
        shapes.push(Shape {
            name: &h.name,
            bounds: bounds_of(&edge),
            edge,
            inside,
        });
    }
    let grid = BoxGrid::new(shapes.iter().map(|s| s.bounds).collect());
    let mut near = Vec::new();
    let mut twins = Vec::new();
    let mut dropped = vec![false; openings.len()];
    for (i, o) in openings.iter().enumerate() {
        if dropped[i] {
            continue;
        }
        grid.overlapping(&shapes[i].bounds, &mut near);
        near.sort_unstable();
        // Openings with a later opening, and every hole; holes among themselves are the
        // drawing's own business (chaining keeps them apart).
        for &j in near.iter().filter(|&&j| j > i) {
            if j < openings.len() && dropped[j] {
                continue;
            }
            let (a, b) = (&shapes[i], &shapes[j]);
            if let Inside::Ellipse(e) = b.inside
                && j < openings.len()
                && same(&o.ellipse, e)
            {
                let twin = &openings[j];
                if twin.side != o.side || twin.pocket != o.pocket {
                    return Err(LayoutError::Duplicate {
                        a: a.name.to_string(),
                        b: b.name.to_string(),
                        at: at(o.ellipse.centre()),
                    });
                }
                dropped[j] = true;
                twins.push(Twin {
                    kept: i,
                    dropped: j,
                    centre: o.ellipse.centre(),
                });
                continue;
            }
            let hit = a
                .edge
                .iter()
                .find(|p| b.inside.contains(**p))
                .or_else(|| b.edge.iter().find(|p| a.inside.contains(**p)));
            if let Some(p) = hit {
                return Err(LayoutError::Overlap {
                    a: a.name.to_string(),
                    b: b.name.to_string(),
                    at: at(*p),
                });
            }
        }
    }
    Ok(twins)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plan::CutSide;

    fn opening(name: &str, x: f64, y: f64, a: f64, b: f64) -> Opening {
        Opening {
            name: name.into(),
            ellipse: Ellipse::new(Point::new(x, y), a, b, 0.3).unwrap(),
            side: CutSide::Inside,
            pocket: false,
            own: Default::default(),
        }
    }

    fn plate() -> Part {
        let corners = [
            Point::new(0.0, 0.0),
            Point::new(200.0, 0.0),
            Point::new(200.0, 100.0),
            Point::new(0.0, 100.0),
        ];
        let elements = (0..4)
            .map(|k| {
                Element::Line(crate::geom::Segment {
                    start: corners[k],
                    end: corners[(k + 1) % 4],
                })
            })
            .collect();
        Part {
            outline: Some(Contour::new(elements, "PLATE", Vec::new()).unwrap()),
            ..Part::default()
        }
    }

    #[test]
    fn apart_and_inside_is_fine_and_each_fault_is_named() {
        let part = plate();
        let ok = [
            opening("bay 1", 50.0, 50.0, 30.0, 15.0),
            opening("bay 2", 150.0, 50.0, 30.0, 15.0),
        ];
        assert_eq!(check_layout(&part, &ok), Ok(Vec::new()));
        let through = [opening("bay 1", 190.0, 50.0, 30.0, 15.0)];
        assert!(matches!(
            check_layout(&part, &through),
            Err(LayoutError::ThroughOutline { feature, .. }) if feature == "bay 1"
        ));
        let outside = [opening("bay 1", 300.0, 50.0, 30.0, 15.0)];
        assert!(matches!(
            check_layout(&part, &outside),
            Err(LayoutError::OutsideOutline { .. })
        ));
        let overlap = [
            opening("bay 1", 50.0, 50.0, 30.0, 15.0),
            opening("bay 2", 75.0, 50.0, 30.0, 15.0),
        ];
        assert!(matches!(
            check_layout(&part, &overlap),
            Err(LayoutError::Overlap { a, b, .. }) if a == "bay 1" && b == "bay 2"
        ));
        // Drawn twice, or three times: cut once, the copies named.
        let twice = [
            opening("bay 1", 50.0, 50.0, 30.0, 15.0),
            opening("bay 2", 150.0, 50.0, 30.0, 15.0),
            opening("bay 3", 50.0, 50.0, 30.0, 15.0),
            opening("bay 4", 50.0, 50.0, 30.0, 15.0),
        ];
        let twins = check_layout(&part, &twice).unwrap();
        assert_eq!(
            twins
                .iter()
                .map(|t| (t.kept, t.dropped))
                .collect::<Vec<_>>(),
            [(0, 2), (0, 3)]
        );
        assert!(
            twins[0]
                .warning(&twice)
                .starts_with("bay 3 is the same opening as bay 1")
        );
        // The same ellipse as a hole and as a boss: refused.
        let mut two_cuts = twice[..3].to_vec();
        two_cuts[2].side = CutSide::Outside;
        assert!(matches!(
            check_layout(&part, &two_cuts),
            Err(LayoutError::Duplicate { a, b, .. }) if a == "bay 1" && b == "bay 3"
        ));
        // One inside the other, edges apart: still an overlap.
        let nested = [
            opening("bay 1", 50.0, 50.0, 30.0, 15.0),
            opening("bay 2", 50.0, 50.0, 10.0, 5.0),
        ];
        assert!(matches!(
            check_layout(&part, &nested),
            Err(LayoutError::Overlap { .. })
        ));
    }
}
