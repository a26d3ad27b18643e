//! Exact parallel curves of contours made of lines and arcs.
//!
//! A line moved sideways stays a line and an arc stays an arc with the same centre (radius ± the
//! distance), so the offset of a line-and-arc contour is exact. Where two moved pieces part (a
//! corner turning away from the tool side) they are joined by an arc of the tool radius about
//! the corner; where they cross (a corner turning towards the tool side) they are trimmed at
//! their crossing, leaving a sharp inside corner that the tool rounds with its own radius.

use crate::geom::{ArcSegment, Line, Point, Segment, Vec2};
use crate::geom::{Contour, Element};

/// Sine of the turn below which two pieces count as meeting tangentially (no join needed).
const TANGENT_SINE: f64 = 1e-9;

/// Sine of the turn below which two pieces turning towards the tool side may be trimmed where
/// their moved ends meet halfway, not at the crossing of their circles (see
/// [`GRAZING_ERROR`]).
const GRAZING_SINE: f64 = 1e-3;

/// The largest `distance × turn²` (mm) for that halfway point: it lies within half of it of
/// both pieces, far inside [`crate::geom::JOIN_LIMIT`].
const GRAZING_ERROR: f64 = 1e-8;

/// Why a contour could not be offset.
#[derive(Debug, Clone, PartialEq)]
pub enum OffsetError {
    /// An arc curving towards the tool side is not larger than the tool radius.
    ArcTooTight { at: Point, radius: f64 },
    /// A piece vanished or turned round after trimming: the tool does not fit.
    PieceVanishes { at: Point },
    /// The trimmed and joined pieces do not close (a fault in the offset).
    Unclosed(crate::geom::ContourError),
}

/// The result of an offset: the tool-centre contour and the sharp corners it keeps.
#[derive(Debug, Clone, PartialEq)]
pub struct Offset {
    pub contour: Contour,
    /// Corners of the drawn contour that turn towards the tool side: the tool leaves its own
    /// radius there.
    pub inside_corners: Vec<Point>,
}

/// Offsets `contour` by `distance` (> 0) to the left of its direction of travel.
pub fn offset_left(contour: &Contour, distance: f64) -> Result<Offset, OffsetError> {
    let n = contour.elements().len();
    let mut moved: Vec<Element> = Vec::with_capacity(n);
    for e in contour.elements() {
        moved.push(move_left(e, distance)?);
    }
    let mut out: Vec<Element> = Vec::with_capacity(2 * n);
    let mut inside_corners = Vec::new();
    // Trim or join at every corner: corner i lies between piece i and piece i+1.
    let mut pieces = moved.clone();
    let mut joins: Vec<Option<Element>> = vec![None; n];
    for i in 0..n {
        let j = (i + 1) % n;
        let a = &contour.elements()[i];
        let b = &contour.elements()[j];
        let corner = a.end();
        let (Some(t1), Some(t2)) = (a.end_tangent(), b.start_tangent()) else {
            return Err(OffsetError::PieceVanishes { at: corner });
        };
        let turn = t1.cross(t2);
        let (end_i, start_j) = (pieces[i].end(), pieces[j].start());
        if end_i.distance(start_j) <= 1e-9 * distance.max(1.0) && turn.abs() < TANGENT_SINE {
            continue;
        }
        if turn < 0.0 || (turn.abs() < TANGENT_SINE && t1.dot(t2) < 0.0) {
            // Turning right, away from the tool side: join around the corner.
            let n1 = t1.perp();
            let n2 = t2.perp();
            let sweep = n1.cross(n2).atan2(n1.dot(n2));
            joins[i] = Some(Element::Arc(ArcSegment {
                centre: corner,
                radius: distance,
                start_angle: n1.angle(),
                sweep,
            }));
        } else {
            // Turning left, towards the tool side: trim both at their crossing nearest the corner.
            // Pieces meeting at a very small turn (a curve drawn as many arcs) cross at a
            // grazing angle, where the crossing of their circles is ill-conditioned (or lost to
            // rounding): there the moved ends, at most `distance × turn` apart, meet halfway,
            // within `distance × turn² / 2` of both pieces.
            let grazing = turn.abs() < GRAZING_SINE
                && distance * turn * turn <= GRAZING_ERROR
                && end_i.distance(start_j) <= 2.0 * distance * turn.abs() + 1e-12;
            let p = if grazing {
                end_i.midpoint(start_j)
            } else {
                crossing(&pieces[i], &pieces[j], corner)
                    .ok_or(OffsetError::PieceVanishes { at: corner })?
            };
            pieces[i] = with_end(&pieces[i], p);
            pieces[j] = with_start(&pieces[j], p);
            inside_corners.push(corner);
        }
    }
    for i in 0..n {
        check_same_sense(&moved[i], &pieces[i], contour.elements()[i].start())?;
        out.push(pieces[i]);
        if let Some(join) = joins[i] {
            out.push(join);
        }
    }
    Ok(Offset {
        contour: Contour::new(out, contour.layer(), contour.handles().to_vec())
            .map_err(OffsetError::Unclosed)?,
        inside_corners,
    })
}

fn move_left(e: &Element, d: f64) -> Result<Element, OffsetError> {
    match e {
        Element::Line(s) => {
            let n = s
                .direction()
                .normalized()
                .ok_or(OffsetError::PieceVanishes { at: s.start })?
                .perp();
            Ok(Element::Line(Segment::new(s.start + n * d, s.end + n * d)))
        }
        Element::Arc(a) => {
            // Left of a counter-clockwise arc is towards its centre.
            let radius = if a.sweep > 0.0 {
                a.radius - d
            } else {
                a.radius + d
            };
            if radius <= 0.0 {
                return Err(OffsetError::ArcTooTight {
                    at: a.point_at(0.5),
                    radius: a.radius,
                });
            }
            Ok(Element::Arc(ArcSegment { radius, ..*a }))
        }
    }
}

/// The crossing of two pieces (as full lines or circles) nearest to `near`.
fn crossing(a: &Element, b: &Element, near: Point) -> Option<Point> {
    let candidates: Vec<Point> = match (a, b) {
        (Element::Line(s), Element::Line(t)) => s
            .line()
            .and_then(|l| t.line().and_then(|m| l.intersection(&m)))
            .into_iter()
            .collect(),
        (Element::Line(s), Element::Arc(c)) | (Element::Arc(c), Element::Line(s)) => {
            line_circle(&s.line()?, c.centre, c.radius)
        }
        (Element::Arc(c), Element::Arc(d)) => circle_circle(c.centre, c.radius, d.centre, d.radius),
    };
    candidates
        .into_iter()
        .min_by(|p, q| p.distance(near).total_cmp(&q.distance(near)))
}

fn line_circle(l: &Line, c: Point, r: f64) -> Vec<Point> {
    let foot = l.project(c);
    let h = c.distance(foot);
    if h > r {
        return vec![];
    }
    let s = (r * r - h * h).sqrt();
    let d = l.direction();
    vec![foot + d * s, foot - d * s]
}

fn circle_circle(c1: Point, r1: f64, c2: Point, r2: f64) -> Vec<Point> {
    let v = c2 - c1;
    let d = v.length();
    if d == 0.0 || d > r1 + r2 || d < (r1 - r2).abs() {
        return vec![];
    }
    let x = (d * d + r1 * r1 - r2 * r2) / (2.0 * d);
    let h = (r1 * r1 - x * x).max(0.0).sqrt();
    let u = v / d;
    let base = c1 + u * x;
    vec![base + u.perp() * h, base - u.perp() * h]
}

fn with_end(e: &Element, p: Point) -> Element {
    match e {
        Element::Line(s) => Element::Line(Segment::new(s.start, p)),
        Element::Arc(a) => {
            let ang = (p - a.centre).angle();
            Element::Arc(ArcSegment {
                sweep: same_sense_sweep(a.start_angle, ang, a.sweep),
                ..*a
            })
        }
    }
}

fn with_start(e: &Element, p: Point) -> Element {
    match e {
        Element::Line(s) => Element::Line(Segment::new(p, s.end)),
        Element::Arc(a) => {
            let ang = (p - a.centre).angle();
            let end = a.end_angle();
            Element::Arc(ArcSegment {
                start_angle: ang,
                sweep: same_sense_sweep(ang, end, a.sweep),
                ..*a
            })
        }
    }
}

/// The sweep from `from` to `to` turning the way `sense` turns, in (0, 2π) or (−2π, 0).
fn same_sense_sweep(from: f64, to: f64, sense: f64) -> f64 {
    let tau = std::f64::consts::TAU;
    if sense >= 0.0 {
        (to - from).rem_euclid(tau)
    } else {
        -(from - to).rem_euclid(tau)
    }
}

/// A trimmed piece must still run the way the moved piece ran and be no longer than it.
fn check_same_sense(moved: &Element, trimmed: &Element, at: Point) -> Result<(), OffsetError> {
    let ok = match (moved, trimmed) {
        (Element::Line(m), Element::Line(t)) => {
            t.direction().dot(m.direction()) > 0.0 && t.length() <= m.length() * (1.0 + 1e-9)
        }
        (Element::Arc(m), Element::Arc(t)) => {
            t.sweep.abs() > 0.0 && t.sweep.abs() <= m.sweep.abs() + 1e-9
        }
        _ => false,
    };
    if ok {
        Ok(())
    } else {
        Err(OffsetError::PieceVanishes { at })
    }
}

/// The unit normal to the left of travel at the start of `e`.
pub fn start_left_normal(e: &Element) -> Option<Vec2> {
    e.start_tangent().map(Vec2::perp)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn polygon(pts: &[(f64, f64)]) -> Contour {
        let p: Vec<Point> = pts.iter().map(|&(x, y)| Point::new(x, y)).collect();
        Contour::new(
            (0..p.len())
                .map(|i| Element::Line(Segment::new(p[i], p[(i + 1) % p.len()])))
                .collect(),
            "0",
            vec![],
        )
        .unwrap()
    }

    #[test]
    fn clockwise_square_grows_with_round_corners() {
        // Left of a clockwise square is outside: 10 × 10 grows by 1 on every side, corners become
        // quarter circles of radius 1. Area = 100 + 4·10·1 + π·1² (Steiner's formula for parallel
        // bodies of a convex set).
        let sq = polygon(&[(0.0, 0.0), (0.0, 10.0), (10.0, 10.0), (10.0, 0.0)]);
        let o = offset_left(&sq, 1.0).unwrap();
        assert_eq!(o.contour.elements().len(), 8);
        let area = -o.contour.signed_area();
        assert!(
            (area - (140.0 + std::f64::consts::PI)).abs() < 1e-12,
            "{area}"
        );
        assert!(o.inside_corners.is_empty());
    }

    #[test]
    fn counter_clockwise_square_shrinks_with_sharp_corners() {
        let sq = polygon(&[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0)]);
        let o = offset_left(&sq, 1.0).unwrap();
        assert_eq!(o.contour.elements().len(), 4);
        assert!((o.contour.signed_area() - 64.0).abs() < 1e-12);
        assert_eq!(o.inside_corners.len(), 4);
    }

    #[test]
    fn circle_hole_shrinks_and_too_small_hole_is_refused() {
        let c = Contour::new(
            vec![Element::Arc(ArcSegment::circle(Point::new(1.0, 2.0), 5.0))],
            "0",
            vec![],
        )
        .unwrap();
        let o = offset_left(&c, 2.0).unwrap();
        match o.contour.elements()[0] {
            Element::Arc(a) => assert_eq!(a.radius, 3.0),
            _ => panic!("arc expected"),
        }
        assert!(matches!(
            offset_left(&c, 5.0),
            Err(OffsetError::ArcTooTight { .. })
        ));
    }

    #[test]
    fn narrow_slot_is_refused() {
        // A 2 mm wide slot cannot take a tool of radius 1.5 inside it.
        let slot = polygon(&[(0.0, 0.0), (20.0, 0.0), (20.0, 2.0), (0.0, 2.0)]);
        assert!(offset_left(&slot, 1.5).is_err());
    }
}
