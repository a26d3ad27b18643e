//! Straight moves with as few vertices as a tolerance band allows.
//!
//! The band polygon: vertices on the band's outer edge, each chord as long as it can be while it
//! stays clear of the band's inner edge (it may touch it). On a convex curve every chord then
//! lies in the band (its ends are inside the outer edge, which is convex, and it never crosses the
//! inner edge), so its deviation from the exact curve is at most the band's half-widths on either
//! side; a chord of a curve of curvature κ whose sagitta is the band's width `W` spans
//! `h ≈ √(8W/κ)`, which for the two-sided band `W = 2ε` gives the classic count
//! `N ≈ ∫ √(κ/16ε) ds` (docs/sources.md P3.2; McClure & Vitale for the asymptotics), a
//! factor √2 fewer than chords with their vertices on the curve.

use super::band::{Band, ConvexCurve};
use crate::geom::Point;
use crate::geom::search::golden_min;
use std::f64::consts::FRAC_PI_2;

/// The largest parameter span of one chord (keeps the curve under each chord turning by less
/// than π, so the searches below see one extremum).
const MAX_STEP: f64 = FRAC_PI_2;

/// Vertices of the band polygon over the curve's parameters `[t0, t_end]` (counter-clockwise):
/// `first` and `last` are given (they must lie in the band at `t0` and `t_end`; for a closed
/// curve they are the same point), the vertices between sit on the outer edge `s = band.hi`,
/// placed greedily: each as far along as the chord to it stays clear of the inner edge
/// `s = band.lo`.
///
/// Bound (guaranteed up to the search accuracy, ≈1e-12 of a chord, which the band's
/// [`BAND_SHARE`](super::band::BAND_SHARE) absorbs): every chord lies between the band's edges.
/// Greedy placement from a fixed first vertex uses the fewest chords any polygon with that first
/// vertex and vertices on the outer edge can, plus at most one for the closing chord.
pub(crate) fn band_polygon(
    curve: &impl ConvexCurve,
    band: Band,
    t0: f64,
    t_end: f64,
    first: Point,
    last: Point,
) -> Vec<Point> {
    let mut points = vec![first];
    let (mut v, mut tv) = (first, t0);
    let clear = |v: Point, tv: f64, q: Point, tq: f64| chord_clears(curve, band.lo, v, tv, q, tq);
    // Each pass places one vertex and advances by at least 1e-9 of a turn; the cap only guards
    // against a tolerance far below what the output can carry.
    for _ in 0..10_000_000 {
        if t_end - tv <= MAX_STEP && clear(v, tv, last, t_end) {
            points.push(last);
            return points;
        }
        let top = (tv + MAX_STEP).min(t_end);
        let outer = |t: f64| curve.point(t, band.hi);
        let mut t1 = if clear(v, tv, outer(top), top) {
            top
        } else {
            let (mut lo, mut hi) = (tv, top);
            while hi - lo > 1e-13 * (1.0 + hi.abs()) {
                let mid = 0.5 * (lo + hi);
                if clear(v, tv, outer(mid), mid) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            lo
        };
        if t1 >= t_end {
            // The outer edge at the end is reachable but the given last point is not: split the
            // rest in two, until what is left is too short to matter. Then `last` is joined by
            // one chord: it lies off the band when it is not reachable, and that chord leaves
            // the band by as much as `last` does (an end given off the band, such as a lead's
            // end on a contour fitted to its other side; the caller's own measurement holds
            // the result to the tolerance). This is the one exception to the bound above.
            if t_end - tv <= LAST_STRETCH * (1.0 + t_end.abs()) {
                points.push(last);
                return points;
            }
            t1 = 0.5 * (tv + t_end);
        }
        t1 = t1.max(tv + 1e-9);
        v = outer(t1);
        tv = t1;
        points.push(v);
    }
    points.push(last);
    points
}

/// The parameter span (relative) under which the rest of the curve is closed by one chord to the
/// given last point when that point cannot be reached from the band (the last point of a lead
/// that starts off a one-sided band, say): 1e-9, a chord of 1e-9 of the radius.
const LAST_STRETCH: f64 = 1e-9;

/// Whether the chord from `v` (at parameter `tv`) to `q` (at `tq`) stays clear of the inner
/// edge `s = lo` of the band: the inner edge's arc between the two parameters lies on the chord's
/// left (the inside of the counter-clockwise curve). The signed distance of a convex arc from a
/// line has one minimum, found by golden-section search.
fn chord_clears(curve: &impl ConvexCurve, lo: f64, v: Point, tv: f64, q: Point, tq: f64) -> bool {
    let Some(u) = (q - v).normalized() else {
        return true;
    };
    let left = |t: f64| u.cross(curve.point(t, lo) - v);
    let (least, _) = golden_min(&left, tv, tq);
    least.min(left(tv)).min(left(tq)) >= -ROUNDING_SLACK
}

/// How far (mm) a chord may seem to cross the inner edge before it counts as crossing: rounding
/// in the point arithmetic, for a chord that starts on the edge itself.
const ROUNDING_SLACK: f64 = 1e-12;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::band::CircleCurve;

    #[test]
    fn a_last_point_off_the_band_ends_the_polygon_without_crowding_it() {
        // A quarter of a 4 mm circle, one-sided band [0, 0.01] outside it; the last point lies
        // 0.005 mm inside the circle, off the band (as the end of a lead can, when it meets a
        // contour fitted on the other side): the chords cannot reach it, and the polygon must
        // still end there after about as many vertices as a reachable end needs.
        let curve = CircleCurve {
            centre: Point::new(0.0, 0.0),
            radius: 4.0,
        };
        let band = Band::new(0.01, true, false, 4.0);
        let first = Point::new(4.0, 0.0);
        let reachable = band_polygon(&curve, band, 0.0, FRAC_PI_2, first, Point::new(0.0, 4.0));
        let off = band_polygon(&curve, band, 0.0, FRAC_PI_2, first, Point::new(0.0, 3.995));
        assert_eq!(off.last(), Some(&Point::new(0.0, 3.995)));
        assert!(
            off.len() <= reachable.len() + 64,
            "{} vertices for an unreachable end, {} for a reachable one",
            off.len(),
            reachable.len()
        );
    }
}
