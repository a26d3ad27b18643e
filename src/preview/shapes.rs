//! SVG path data built from f64 geometry (the `svg` crate's `path::Data` is f32, so the `d`
//! strings are written here).
//!
//! All functions take drawing points (mm, y up) and write them flipped, `(x, −y)`
//! (see the `frame` module).

use super::frame::num;
use crate::geom::Move;
use crate::geom::{ArcSegment, Ellipse, Point, Vec2};
use crate::geom::{Contour, Element};
use std::f64::consts::PI;
use std::fmt::Write;

fn xy(p: Point) -> String {
    format!("{} {}", num(p.x), num(-p.y))
}

/// `d` for an ellipse drawn exactly: two elliptical arcs of half a turn each, from one end of the
/// major axis to the other and back (SVG 1.1 §8.3.8; a single arc cannot close on itself).
///
/// `rx = a`, `ry = b`, and the x-axis rotation is `−angle` in degrees because flipping y turns a
/// counter-clockwise angle into a clockwise one (docs/sources.md P7).
pub fn ellipse_d(e: &Ellipse) -> String {
    let p0 = e.point(0.0);
    let p1 = e.point(PI);
    let rot = num(-e.angle().to_degrees());
    let (a, b) = (num(e.a()), num(e.b()));
    format!(
        "M {} A {a} {b} {rot} 0 1 {} A {a} {b} {rot} 0 1 {} Z",
        xy(p0),
        xy(p1),
        xy(p0)
    )
}

/// Appends circular-arc commands for `arc` (its start is the current point), split into pieces of
/// at most half a turn so that the SVG large-arc flag is never ambiguous.
///
/// Flipping y turns a counter-clockwise arc (positive sweep) into one that SVG calls
/// negative-angle, so the sweep flag is 0 for counter-clockwise and 1 for clockwise.
fn push_arc(d: &mut String, arc: &ArcSegment) {
    let pieces = (arc.sweep.abs() / PI - 1e-9).ceil().max(1.0) as usize;
    let flag = if arc.sweep > 0.0 { 0 } else { 1 };
    let r = num(arc.radius);
    for i in 1..=pieces {
        let end = arc.point_at(i as f64 / pieces as f64);
        let _ = write!(d, " A {r} {r} 0 0 {flag} {}", xy(end));
    }
}

/// `d` for a closed contour of lines and circular arcs.
pub fn contour_d(contour: &Contour) -> String {
    let Some(first) = contour.elements().first() else {
        return String::new();
    };
    let mut d = format!("M {}", xy(first.start()));
    for element in contour.elements() {
        match element {
            Element::Line(s) => {
                let _ = write!(d, " L {}", xy(s.end));
            }
            Element::Arc(a) => push_arc(&mut d, a),
        }
    }
    d.push_str(" Z");
    d
}

/// `d` for a run of feed moves from `start`, after a straight lead from `lead_from` when given:
/// `L` for each line, and each arc drawn exactly with circular `A` commands (SVG 1.1 §8.3.8),
/// split into pieces of less than half a turn so that the large-arc flag is always 0 and never
/// ambiguous (docs/sources.md P7). Closed with `Z` when the run ends where it starts.
///
/// The sweep flag accounts for the y flip: a counter-clockwise (G3) arc in the drawing is drawn
/// with flag 0, a clockwise (G2) one with flag 1. An arc's radius is its start radius
/// interpolated towards its end radius (they differ only by rounding). Moves with a non-finite
/// end are left out; an arc with a non-finite centre, or after a left-out move, is drawn as a
/// line.
pub fn moves_d(lead_from: Option<Point>, start: Point, moves: &[Move]) -> String {
    let mut d = String::new();
    let mut current: Option<Point> = None;
    for p in lead_from.into_iter().chain(std::iter::once(start)) {
        if p.is_finite() {
            let _ = write!(d, "{}{}", if d.is_empty() { "M " } else { " L " }, xy(p));
            current = Some(p);
        }
    }
    let mut skipped = !start.is_finite();
    let mut from = start;
    for m in moves {
        let end = m.end();
        if !end.is_finite() {
            skipped = true;
            from = end;
            continue;
        }
        if d.is_empty() {
            let _ = write!(d, "M {}", xy(end));
            current = Some(end);
            from = end;
            continue;
        }
        match *m {
            Move::Arc { centre, ccw, .. } if centre.is_finite() && !skipped => {
                let sweep = m.sweep(from);
                // Half a turn or more in two pieces or more, as the program writes it.
                let pieces = (sweep.abs() / (PI - 1e-9)).floor() as usize + 1;
                let flag = if ccw { 0 } else { 1 };
                let (r0, r1) = (from.distance(centre), end.distance(centre));
                for k in 1..=pieces {
                    let t = k as f64 / pieces as f64;
                    let to = if k == pieces {
                        end
                    } else {
                        m.point_at(from, t)
                    };
                    let r = num(r0 + (t - 0.5 / pieces as f64) * (r1 - r0));
                    let _ = write!(d, " A {r} {r} 0 0 {flag} {}", xy(to));
                }
            }
            _ => {
                let _ = write!(d, " L {}", xy(end));
            }
        }
        skipped = false;
        current = Some(end);
        from = end;
    }
    if moves.len() > 1 && current == Some(start) && lead_from.is_none() {
        d.push_str(" Z");
    }
    d
}

/// `d` for a polyline through the finite points; closed with `Z` when `close` is true.
pub fn polyline_d(points: &[Point], close: bool) -> String {
    let mut d = String::new();
    for p in points.iter().filter(|p| p.is_finite()) {
        let _ = write!(d, "{}{}", if d.is_empty() { "M " } else { " L " }, xy(*p));
    }
    if close && !d.is_empty() {
        d.push_str(" Z");
    }
    d
}

/// Where to draw direction arrows along a polyline: points at the given fractions of its length
/// with the unit direction of travel there. Zero-length polylines give none.
pub fn arrow_spots(points: &[Point], fractions: &[f64]) -> Vec<(Point, Vec2)> {
    let pts: Vec<Point> = points.iter().copied().filter(|p| p.is_finite()).collect();
    let lengths: Vec<f64> = pts.windows(2).map(|w| w[0].distance(w[1])).collect();
    let total: f64 = lengths.iter().sum();
    if total <= 0.0 {
        return Vec::new();
    }
    let mut spots = Vec::new();
    for &f in fractions {
        let mut left = f.clamp(0.0, 1.0) * total;
        for (w, &len) in pts.windows(2).zip(&lengths) {
            if len <= 0.0 {
                continue;
            }
            if left <= len {
                if let Some(dir) = (w[1] - w[0]).normalized() {
                    spots.push((w[0].lerp(w[1], left / len), dir));
                }
                break;
            }
            left -= len;
        }
    }
    spots
}

/// `d` for a filled arrowhead centred on `at`, pointing along `dir`, `length` long.
pub fn arrow_d(at: Point, dir: Vec2, length: f64) -> String {
    let half = dir * (0.5 * length);
    let side = dir.perp() * (0.4 * length);
    let tip = at + half;
    let back = at - half;
    format!(
        "M {} L {} L {} Z",
        xy(tip),
        xy(back + side),
        xy(back - side)
    )
}

/// Exact axis-aligned bounds `[min, max]` of an ellipse: its support function along +x and +y
/// gives the half-widths.
pub fn ellipse_bounds(e: &Ellipse) -> [Point; 2] {
    let hx = e.support(Vec2::new(1.0, 0.0));
    let hy = e.support(Vec2::new(0.0, 1.0));
    let c = e.centre();
    [
        Point::new(c.x - hx, c.y - hy),
        Point::new(c.x + hx, c.y + hy),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::Segment;

    #[test]
    fn ellipse_path_runs_between_the_major_axis_ends() {
        let e = Ellipse::new(Point::new(10.0, 5.0), 50.0, 20.0, 30f64.to_radians()).unwrap();
        let d = ellipse_d(&e);
        // Major-axis ends: centre ± a (cos 30°, sin 30°) = (53.3013, 30) and (−33.3013, −20).
        assert!(
            d.starts_with("M 53.3013 -30 A 50 20 -30 0 1 -33.3013 20 A 50 20 -30 0 1"),
            "{d}"
        );
        assert!(d.ends_with("53.3013 -30 Z"));
    }

    #[test]
    fn full_circle_and_long_arcs_are_split() {
        let c = Contour::new(
            vec![Element::Arc(ArcSegment::circle(Point::new(0.0, 0.0), 5.0))],
            "0",
            vec![],
        )
        .unwrap();
        let d = contour_d(&c);
        assert_eq!(d.matches(" A ").count(), 2, "{d}");
        assert_eq!(d, "M 5 0 A 5 5 0 0 0 -5 0 A 5 5 0 0 0 5 0 Z");
        let (p, q) = (Point::new(0.0, 0.0), Point::new(1.0, 2.0));
        let there_and_back = Contour::new(
            vec![
                Element::Line(Segment::new(p, q)),
                Element::Line(Segment::new(q, p)),
            ],
            "0",
            vec![],
        )
        .unwrap();
        assert_eq!(contour_d(&there_and_back), "M 0 0 L 1 -2 L 0 0 Z");
    }

    #[test]
    fn arrows_sit_at_fractions_of_the_length() {
        let pts = [
            Point::new(0.0, 0.0),
            Point::new(10.0, 0.0),
            Point::new(10.0, 10.0),
        ];
        let spots = arrow_spots(&pts, &[0.25, 0.75]);
        assert_eq!(spots.len(), 2);
        assert!((spots[0].0.x - 5.0).abs() < 1e-12 && spots[0].1.x == 1.0);
        assert!((spots[1].0.y - 5.0).abs() < 1e-12 && spots[1].1.y == 1.0);
        assert!(arrow_spots(&[Point::new(1.0, 1.0); 3], &[0.5]).is_empty());
    }

    #[test]
    fn ellipse_bounds_are_exact_for_an_axis_aligned_ellipse() {
        let e = Ellipse::new(Point::new(1.0, 2.0), 4.0, 3.0, 0.0).unwrap();
        let [lo, hi] = ellipse_bounds(&e);
        assert!((lo.x + 3.0).abs() < 1e-12 && (hi.y - 5.0).abs() < 1e-12);
    }
}
