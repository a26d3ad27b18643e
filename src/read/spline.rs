//! SPLINE entities: the NURBS curve evaluated exactly and approximated by a polyline of
//! circular arcs within [`SPLINE_TOLERANCE`], measured, so that the later stages cut it as they
//! cut any contour of lines and arcs.
//!
//! # The curve
//!
//! A SPLINE of degree `p` with control points `P₀ … Pₙ₋₁`, weights `w` (all 1 when the file gives
//! none) and knots `u₀ … uₙ₊ₚ` (DXF reference, SPLINE groups 10, 40, 41, 71) is the rational
//! B-spline `C(u) = Σ Nᵢ,ₚ(u) wᵢ Pᵢ / Σ Nᵢ,ₚ(u) wᵢ` for `u` in `[uₚ, uₙ]`, evaluated here by de
//! Boor's algorithm on the homogeneous points `(wᵢ Pᵢ, wᵢ)` (L. Piegl and W. Tiller, *The NURBS
//! Book*, 2nd ed., 1997, §2.3 and §4.2; from memory). Clamped and unclamped knot vectors are
//! both read this way; a curve whose two ends meet is closed.
//!
//! # The arcs
//!
//! Each knot span (where the curve is smooth) is cut into stretches; each stretch gets the arc
//! through its two ends and its middle point (a straight line when those are collinear), and is
//! halved until the largest distance of the curve from that arc, sampled at 16 points and the
//! largest refined by golden-section search, is within [`SPLINE_TOLERANCE`]. The arcs meet the
//! curve at every joint, so the polyline is continuous; its kinks follow the curve's own
//! turning and shrink with the tolerance.

use super::ReadError;
use super::convert::Converted;
use super::entity::EntityKind;
use super::ocs::Ctx;
use crate::geom::search::golden_min;
use crate::geom::{Point, Vec2};
use std::f64::consts::PI;

/// The largest distance (mm) between a SPLINE and the arcs that stand for it. It is counted on
/// top of the job's tolerance: the program's deviation from the drawn spline is at most the
/// reported deviation plus this.
pub const SPLINE_TOLERANCE: f64 = 1e-5;

/// The most arcs one SPLINE may become (a curve needing more is refused as unreasonable).
pub const MAX_SPLINE_ARCS: usize = 100_000;

/// Samples along each stretch when measuring its arc.
const SAMPLES: usize = 16;

/// The SPLINE as a polyline of arcs (see the module docs).
pub(super) fn spline(sp: &dxf::entities::Spline, ctx: &Ctx) -> Result<Converted, ReadError> {
    let mirrored = ctx.mirrored(&sp.normal)?;
    let p = usize::try_from(sp.degree_of_curve)
        .ok()
        .filter(|&p| p >= 1)
        .ok_or_else(|| {
            ctx.bad(format!(
                "its degree is {}; a spline's degree is at least 1",
                sp.degree_of_curve
            ))
        })?;
    let n = sp.control_points.len();
    if n == 0 {
        return Err(ctx.bad(
            "it is given by fit points only, without control points; save it from the CAD \
             program with its control points (or convert it to a polyline)",
        ));
    }
    if n <= p {
        return Err(ctx.bad(format!(
            "it has {n} control points, too few for degree {p} (at least {})",
            p + 1
        )));
    }
    let knots = &sp.knot_values;
    if knots.len() != n + p + 1 {
        return Err(ctx.bad(format!(
            "it has {} knots, but {n} control points of degree {p} need {}",
            knots.len(),
            n + p + 1
        )));
    }
    let weights: Vec<f64> = if sp.weight_values.is_empty() {
        vec![1.0; n]
    } else if sp.weight_values.len() == n {
        sp.weight_values.clone()
    } else {
        return Err(ctx.bad(format!(
            "it has {} weights for {n} control points",
            sp.weight_values.len()
        )));
    };
    let coords: Vec<f64> = sp
        .control_points
        .iter()
        .flat_map(|c| [c.x, c.y, c.z])
        .chain(knots.iter().copied())
        .chain(weights.iter().copied())
        .collect();
    ctx.finite(&coords)?;
    if weights.iter().any(|&w| w <= 0.0) {
        return Err(ctx.bad("a weight is not positive; every weight of a spline is"));
    }
    if knots.windows(2).any(|k| k[1] < k[0]) || knots[n] <= knots[p] {
        return Err(ctx.bad("its knots do not increase; correct the spline in the CAD program"));
    }
    let control: Vec<Point> = sp
        .control_points
        .iter()
        .map(|c| ctx.ocs(c.x, c.y, mirrored))
        .collect();
    let curve = Nurbs {
        p,
        knots,
        control: &control,
        weights: &weights,
    };
    let vertices = arcs(&curve).ok_or_else(|| {
        ctx.bad(format!(
            "it would take more than {MAX_SPLINE_ARCS} arcs to follow within \
             {SPLINE_TOLERANCE} mm; simplify the spline in the CAD program"
        ))
    })?;
    let first = vertices.first().map(|v| v.0);
    let last = vertices.last().map(|v| v.0);
    let closed = matches!((first, last), (Some(a), Some(b)) if a.distance(b) <= 1e-9 * (1.0 + a.distance(Point::ORIGIN)));
    let mut vertices = vertices;
    if closed {
        // The last vertex repeats the first: the closing arc is the one before it.
        vertices.pop();
    }
    if vertices.len() < 2 {
        return Ok(Converted::Degenerate("no length"));
    }
    Ok(Converted::Kind(EntityKind::Polyline { vertices, closed }))
}

/// A NURBS curve in the plane (mm).
pub(super) struct Nurbs<'a> {
    pub(super) p: usize,
    pub(super) knots: &'a [f64],
    pub(super) control: &'a [Point],
    pub(super) weights: &'a [f64],
}

impl Nurbs<'_> {
    /// The curve's parameter range `[uₚ, uₙ]`.
    fn domain(&self) -> (f64, f64) {
        (self.knots[self.p], self.knots[self.control.len()])
    }

    /// `C(u)` by de Boor's algorithm on homogeneous points.
    pub(super) fn point(&self, u: f64) -> Point {
        let (p, n) = (self.p, self.control.len());
        let (lo, hi) = self.domain();
        let u = u.clamp(lo, hi);
        // The span k with u_k ≤ u < u_{k+1}, p ≤ k < n (the last span holds u = u_n).
        let mut k = p;
        while k + 1 < n && self.knots[k + 1] <= u {
            k += 1;
        }
        let mut d: Vec<[f64; 3]> = (0..=p)
            .map(|j| {
                let i = k - p + j;
                let w = self.weights[i];
                [self.control[i].x * w, self.control[i].y * w, w]
            })
            .collect();
        for r in 1..=p {
            for j in (r..=p).rev() {
                let i = k - p + j;
                let denom = self.knots[i + p + 1 - r] - self.knots[i];
                let a = if denom > 0.0 {
                    (u - self.knots[i]) / denom
                } else {
                    0.0
                };
                let before = d[j - 1];
                for (c, b) in d[j].iter_mut().zip(before) {
                    *c = (1.0 - a) * b + a * *c;
                }
            }
        }
        let [x, y, w] = d[p];
        Point::new(x / w, y / w)
    }
}

/// The polyline (vertex, bulge of the piece from it) following `curve` within
/// [`SPLINE_TOLERANCE`], from the start to the end (the last vertex is the curve's end, bulge 0);
/// `None` past [`MAX_SPLINE_ARCS`].
pub(super) fn arcs(curve: &Nurbs) -> Option<Vec<(Point, f64)>> {
    let (lo, hi) = curve.domain();
    // The distinct knots inside the domain: the curve is smooth between them.
    let mut breaks: Vec<f64> = vec![lo];
    for &k in curve.knots {
        if k > *breaks.last()? && k < hi {
            breaks.push(k);
        }
    }
    breaks.push(hi);
    let mut out: Vec<(Point, f64)> = Vec::new();
    for span in breaks.windows(2) {
        let mut stack = vec![(span[0], span[1], 0u32)];
        // Depth-first, later stretches pushed first, so that the stretches come out in order.
        while let Some((a, b, depth)) = stack.pop() {
            let (bulge, error) = stretch(curve, a, b);
            if error > SPLINE_TOLERANCE && depth < 40 {
                let m = 0.5 * (a + b);
                stack.push((m, b, depth + 1));
                stack.push((a, m, depth + 1));
                continue;
            }
            out.push((curve.point(a), bulge));
            if out.len() > MAX_SPLINE_ARCS {
                return None;
            }
        }
    }
    out.push((curve.point(hi), 0.0));
    Some(out)
}

/// The bulge of the arc through the stretch `[a, b]`'s ends and middle, and the largest
/// distance of the curve's stretch from that arc's circle (or line).
fn stretch(curve: &Nurbs, a: f64, b: f64) -> (f64, f64) {
    let (pa, pm, pb) = (curve.point(a), curve.point(0.5 * (a + b)), curve.point(b));
    let chord = pb - pa;
    let turn = chord.cross(pm - pa);
    let c = chord.length();
    // The circle through the three points, when they are not collinear.
    let circle = circumcircle(pa, pm, pb).filter(|(_, r)| r.is_finite() && *r < 1e6 * c.max(1e-9));
    let distance = |u: f64| -> f64 {
        let q = curve.point(u);
        match circle {
            Some((centre, r)) => (q.distance(centre) - r).abs(),
            None if c > 0.0 => (chord.cross(q - pa) / c).abs(),
            None => q.distance(pa),
        }
    };
    let step = (b - a) / SAMPLES as f64;
    let (mut worst, mut at) = (0.0f64, a);
    for i in 1..SAMPLES {
        let u = a + step * i as f64;
        let d = distance(u);
        if d > worst {
            (worst, at) = (d, u);
        }
    }
    let (v, _) = golden_min(
        &|u: f64| -distance(u),
        (at - step).max(a),
        (at + step).min(b),
    );
    let error = worst.max(-v);
    let bulge = match circle {
        None => 0.0,
        Some(_) => {
            // The sweep is twice the supplement of the angle at the middle point (inscribed
            // angles); counter-clockwise (positive) when the middle lies right of the chord.
            let (u, v) = (pa - pm, pb - pm);
            let at_middle = u.cross(v).atan2(u.dot(v)).abs();
            let sweep = 2.0 * (PI - at_middle);
            let sign = if turn < 0.0 { 1.0 } else { -1.0 };
            sign * (sweep / 4.0).tan()
        }
    };
    (bulge, error)
}

/// The centre and radius of the circle through three points; `None` when they are collinear.
fn circumcircle(a: Point, b: Point, c: Point) -> Option<(Point, f64)> {
    let (ab, ac) = (b - a, c - a);
    let d = 2.0 * ab.cross(ac);
    if d == 0.0 || !d.is_finite() {
        return None;
    }
    let (l1, l2) = (ab.length_squared(), ac.length_squared());
    let centre = a + Vec2::new(ac.y * l1 - ab.y * l2, ab.x * l2 - ac.x * l1) / d;
    Some((centre, centre.distance(a)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::{ArcSegment, Element, Segment};

    /// The full circle of radius `r` about the origin as a rational quadratic NURBS of nine
    /// control points on the square round it, weights 1 and √2/2 in turn, knots
    /// 0,0,0,¼,¼,½,½,¾,¾,1,1,1 (The NURBS Book §7.5, from memory; checked here by the points
    /// lying on the circle).
    fn circle_nurbs(r: f64) -> (Vec<Point>, Vec<f64>, Vec<f64>) {
        let s = std::f64::consts::FRAC_1_SQRT_2;
        let control = [
            (1.0, 0.0),
            (1.0, 1.0),
            (0.0, 1.0),
            (-1.0, 1.0),
            (-1.0, 0.0),
            (-1.0, -1.0),
            (0.0, -1.0),
            (1.0, -1.0),
            (1.0, 0.0),
        ]
        .iter()
        .map(|&(x, y)| Point::new(r * x, r * y))
        .collect();
        let weights = vec![1.0, s, 1.0, s, 1.0, s, 1.0, s, 1.0];
        let knots = vec![
            0.0, 0.0, 0.0, 0.25, 0.25, 0.5, 0.5, 0.75, 0.75, 1.0, 1.0, 1.0,
        ];
        (control, weights, knots)
    }

    #[test]
    fn the_nurbs_circle_is_a_circle_and_becomes_arcs_on_it() {
        let (control, weights, knots) = circle_nurbs(7.0);
        let curve = Nurbs {
            p: 2,
            knots: &knots,
            control: &control,
            weights: &weights,
        };
        for k in 0..=200 {
            let q = curve.point(k as f64 / 200.0);
            assert!((q.distance(Point::ORIGIN) - 7.0).abs() < 1e-12, "{q:?}");
        }
        let vertices = arcs(&curve).unwrap();
        // Each quarter is one exact arc: the three points of a stretch lie on the circle.
        assert_eq!(vertices.len(), 5, "{vertices:?}");
        for w in vertices.windows(2) {
            let arc = ArcSegment::from_bulge(w[0].0, w[1].0, w[0].1).unwrap();
            assert!((arc.radius - 7.0).abs() < 1e-9 && arc.centre.distance(Point::ORIGIN) < 1e-9);
            assert!(arc.sweep > 0.0, "counter-clockwise like the curve");
        }
    }

    #[test]
    fn a_cubic_spline_is_followed_within_the_tolerance() {
        // A clamped cubic through a wavy control polygon; the arcs' every point (sampled) within
        // the tolerance of the curve, and the curve's within the tolerance of the arcs.
        let control: Vec<Point> = [
            (0.0, 0.0),
            (10.0, 15.0),
            (25.0, -10.0),
            (40.0, 12.0),
            (55.0, 0.0),
        ]
        .iter()
        .map(|&(x, y)| Point::new(x, y))
        .collect();
        let weights = vec![1.0, 1.0, 2.0, 1.0, 1.0];
        let knots = vec![0.0, 0.0, 0.0, 0.0, 0.4, 1.0, 1.0, 1.0, 1.0];
        let curve = Nurbs {
            p: 3,
            knots: &knots,
            control: &control,
            weights: &weights,
        };
        let vertices = arcs(&curve).unwrap();
        assert!(vertices.first().unwrap().0.distance(control[0]) < 1e-12);
        assert!(vertices.last().unwrap().0.distance(control[4]) < 1e-12);
        let pieces: Vec<Element> = vertices
            .windows(2)
            .map(|w| match ArcSegment::from_bulge(w[0].0, w[1].0, w[0].1) {
                Some(a) => Element::Arc(a),
                None => Element::Line(Segment::new(w[0].0, w[1].0)),
            })
            .collect();
        let near = |q: Point| {
            pieces
                .iter()
                .map(|a| a.distance_to(q))
                .fold(f64::INFINITY, f64::min)
        };
        let mut worst: f64 = 0.0;
        for k in 0..=5000 {
            worst = worst.max(near(curve.point(k as f64 / 5000.0)));
        }
        assert!(worst <= SPLINE_TOLERANCE * 1.001, "{worst}");
        assert!(vertices.len() < 2000, "{} arcs", vertices.len());
    }
}
