//! The crossing check between closed shapes: arcs and ellipses flattened to chords within
//! [`CROSSING_CHECK_SAGITTA`], and polygon boundaries tested for meeting.

use super::CROSSING_CHECK_SAGITTA;
use crate::geom::{Contour, Element, bounds_of};
use crate::geom::{Ellipse, Point};

/// Number of chords for an arc of radius `r` and sweep `sweep` with sagitta at most
/// [`CROSSING_CHECK_SAGITTA`]: a chord of angle φ has sagitta r(1 − cos(φ/2)).
fn chord_count(r: f64, sweep: f64) -> usize {
    let s = CROSSING_CHECK_SAGITTA;
    let step = if r <= s {
        std::f64::consts::PI
    } else {
        2.0 * (1.0 - s / r).acos()
    };
    ((sweep.abs() / step).ceil() as usize).clamp(1, 4096)
}

pub(super) fn flatten_contour(c: &Contour) -> Vec<Point> {
    let mut pts = Vec::new();
    for e in c.elements() {
        match e {
            Element::Line(s) => pts.push(s.start),
            Element::Arc(a) => {
                let k = chord_count(a.radius, a.sweep);
                pts.extend((0..k).map(|i| a.point_at(i as f64 / k as f64)));
            }
        }
    }
    pts
}

/// Chords of the ellipse, sized by its largest radius of curvature a²/b (so the sagitta
/// bound holds everywhere).
pub(super) fn flatten_ellipse(e: &Ellipse) -> Vec<Point> {
    let k = chord_count(e.a() * e.a() / e.b(), std::f64::consts::TAU).max(8);
    (0..k)
        .map(|i| e.point(i as f64 * std::f64::consts::TAU / k as f64))
        .collect()
}

/// A point where the boundaries of two closed polygons cross or touch, if any.
pub(super) fn polygons_cross(p: &[Point], q: &[Point]) -> Option<Point> {
    let (qlo, qhi) = bounds_of(q)?;
    let (np, nq) = (p.len(), q.len());
    for i in 0..np {
        let (a, b) = (p[i], p[(i + 1) % np]);
        if a.x.max(b.x) < qlo.x
            || a.x.min(b.x) > qhi.x
            || a.y.max(b.y) < qlo.y
            || a.y.min(b.y) > qhi.y
        {
            continue;
        }
        for j in 0..nq {
            let (c, d) = (q[j], q[(j + 1) % nq]);
            if let Some(x) = segments_meet(a, b, c, d) {
                return Some(x);
            }
        }
    }
    None
}

/// Where segments ab and cd meet (touching counts), if they do.
fn segments_meet(a: Point, b: Point, c: Point, d: Point) -> Option<Point> {
    if a.x.max(b.x) < c.x.min(d.x)
        || c.x.max(d.x) < a.x.min(b.x)
        || a.y.max(b.y) < c.y.min(d.y)
        || c.y.max(d.y) < a.y.min(b.y)
    {
        return None;
    }
    let (r, s) = (b - a, d - c);
    let denom = r.cross(s);
    let ac = c - a;
    if denom == 0.0 {
        // Parallel: they meet only if collinear and overlapping.
        if ac.cross(r) != 0.0 {
            return None;
        }
        let rr = r.dot(r);
        if rr == 0.0 {
            return None;
        }
        let (t0, t1) = (ac.dot(r) / rr, (d - a).dot(r) / rr);
        let (lo, hi) = (t0.min(t1), t0.max(t1));
        if hi < 0.0 || lo > 1.0 {
            return None;
        }
        return Some(a + r * lo.max(0.0));
    }
    let t = ac.cross(s) / denom;
    let u = ac.cross(r) / denom;
    if (0.0..=1.0).contains(&t) && (0.0..=1.0).contains(&u) {
        Some(a + r * t)
    } else {
        None
    }
}
