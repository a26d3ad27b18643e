//! Closed contours made of straight and circular pieces (lines and arcs).

use super::{ArcSegment, Bounds, Point, Segment, Vec2};
use serde::Serialize;

/// One piece of a contour.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub enum Element {
    Line(Segment),
    Arc(ArcSegment),
}

impl Element {
    /// The piece moved by `v`.
    pub fn translated(&self, v: Vec2) -> Element {
        match self {
            Element::Line(s) => Element::Line(s.translated(v)),
            Element::Arc(a) => Element::Arc(a.translated(v)),
        }
    }

    pub fn start(&self) -> Point {
        match self {
            Element::Line(s) => s.start,
            Element::Arc(a) => a.start_point(),
        }
    }

    pub fn end(&self) -> Point {
        match self {
            Element::Line(s) => s.end,
            Element::Arc(a) => a.end_point(),
        }
    }

    /// The point at share `t` (0 to 1) of the piece from its start.
    pub fn point_at(&self, t: f64) -> Point {
        match self {
            Element::Line(s) => s.point_at(t),
            Element::Arc(a) => a.point_at(t),
        }
    }

    pub fn length(&self) -> f64 {
        match self {
            Element::Line(s) => s.length(),
            Element::Arc(a) => a.length(),
        }
    }

    /// Unit tangent in the direction of travel at the start.
    pub fn start_tangent(&self) -> Option<Vec2> {
        match self {
            Element::Line(s) => s.direction().normalized(),
            Element::Arc(a) => Some(a.tangent_at(0.0)),
        }
    }

    /// Unit tangent in the direction of travel at the end.
    pub fn end_tangent(&self) -> Option<Vec2> {
        match self {
            Element::Line(s) => s.direction().normalized(),
            Element::Arc(a) => Some(a.tangent_at(1.0)),
        }
    }

    pub fn reversed(&self) -> Element {
        match self {
            Element::Line(s) => Element::Line(Segment::new(s.end, s.start)),
            Element::Arc(a) => Element::Arc(a.reversed()),
        }
    }

    /// The piece cut at share `t` (strictly between 0 and 1) into the part before and the part
    /// after, meeting at [`Element::point_at`]`(t)`.
    pub fn split_at(&self, t: f64) -> (Element, Element) {
        match self {
            Element::Line(s) => {
                let m = s.point_at(t);
                (
                    Element::Line(Segment::new(s.start, m)),
                    Element::Line(Segment::new(m, s.end)),
                )
            }
            Element::Arc(a) => {
                let first = ArcSegment {
                    sweep: a.sweep * t,
                    ..*a
                };
                let second = ArcSegment {
                    start_angle: a.start_angle + a.sweep * t,
                    sweep: a.sweep * (1.0 - t),
                    ..*a
                };
                (Element::Arc(first), Element::Arc(second))
            }
        }
    }

    /// Shortest distance from `p` to this piece.
    pub fn distance_to(&self, p: Point) -> f64 {
        match self {
            Element::Line(s) => s.distance_to(p),
            Element::Arc(a) => a.distance_to(p),
        }
    }

    /// The signed area contribution `∮ x dy − y dx / 2` of this piece (Green's theorem).
    fn area_term(&self) -> f64 {
        match self {
            Element::Line(s) => 0.5 * s.start.to_vec().cross(s.end.to_vec()),
            Element::Arc(a) => {
                // ½ ∫ (x dy − y dx) over the arc = ½ [c × (p1 − p0) + r² Δθ].
                let c = a.centre.to_vec();
                let chord = a.end_point() - a.start_point();
                0.5 * (c.cross(chord) + a.radius * a.radius * a.sweep)
            }
        }
    }
}

/// Consecutive pieces of a [`Contour`] must meet to within this distance (mm).
///
/// 1e-6 mm: the chainer snaps shared points together, after which a line's end agrees bit for bit
/// and an arc's computed end to about 1e-13 of its radius, so this passes arcs of radius up to
/// 10 km; yet it is four orders below the smallest gap the chainer is ever told to close.
pub const JOIN_LIMIT: f64 = 1e-6;

/// Why pieces do not make a [`Contour`].
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ContourError {
    #[error("a contour needs at least one piece")]
    Empty,
    #[error(
        "piece {index} ends {gap:.3e} mm from where the next one starts, near ({x:.4}, {y:.4}); \
         the pieces must meet to within {JOIN_LIMIT:e} mm",
        x = at.x,
        y = at.y
    )]
    Open { index: usize, gap: f64, at: Point },
}

/// A closed chain of pieces: each piece ends where the next one starts, and the last ends where
/// the first starts, to within [`JOIN_LIMIT`]. Built only through [`Contour::new`], which checks
/// that.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Contour {
    elements: Vec<Element>,
    /// The DXF layer the pieces came from.
    layer: String,
    /// DXF entity handles of the pieces, for messages.
    handles: Vec<String>,
}

impl Contour {
    /// The closed chain of `elements`, refused when empty or when a piece does not end where the
    /// next one starts (the last one where the first starts).
    pub fn new(
        elements: Vec<Element>,
        layer: impl Into<String>,
        handles: Vec<String>,
    ) -> Result<Contour, ContourError> {
        if elements.is_empty() {
            return Err(ContourError::Empty);
        }
        let n = elements.len();
        for (index, e) in elements.iter().enumerate() {
            let (end, next) = (e.end(), elements[(index + 1) % n].start());
            let gap = end.distance(next);
            if gap.is_nan() || gap > JOIN_LIMIT {
                return Err(ContourError::Open {
                    index,
                    gap,
                    at: end,
                });
            }
        }
        Ok(Contour {
            elements,
            layer: layer.into(),
            handles,
        })
    }

    /// The contour moved by `v` (a translation keeps it closed: every piece moves alike).
    pub fn translated(&self, v: Vec2) -> Contour {
        Contour {
            elements: self.elements.iter().map(|e| e.translated(v)).collect(),
            layer: self.layer.clone(),
            handles: self.handles.clone(),
        }
    }

    /// The same closed path travelled from the point at share `t` (strictly between 0 and 1)
    /// of piece `index` instead: that piece is cut there, its second part first and its first
    /// part last. `None` for an index past the end or a `t` outside (0, 1).
    pub fn starting_within(&self, index: usize, t: f64) -> Option<Contour> {
        let piece = self.elements.get(index)?;
        if !(t > 0.0 && t < 1.0) {
            return None;
        }
        let (before, after) = piece.split_at(t);
        let n = self.elements.len();
        let mut elements = Vec::with_capacity(n + 1);
        let mut handles = Vec::with_capacity(n + 1);
        let handle = |k: usize| self.handles.get(k).cloned();
        elements.push(after);
        handles.extend(handle(index));
        for k in 1..n {
            let j = (index + k) % n;
            elements.push(self.elements[j]);
            handles.extend(handle(j));
        }
        elements.push(before);
        handles.extend(handle(index));
        Some(Contour {
            elements,
            layer: self.layer.clone(),
            handles,
        })
    }

    /// The pieces in order of travel.
    pub fn elements(&self) -> &[Element] {
        &self.elements
    }

    /// The DXF layer the pieces came from.
    pub fn layer(&self) -> &str {
        &self.layer
    }

    /// DXF entity handles of the pieces, for messages.
    pub fn handles(&self) -> &[String] {
        &self.handles
    }

    /// The pieces, giving the contour up.
    pub fn into_elements(self) -> Vec<Element> {
        self.elements
    }

    /// Total length of the pieces (mm).
    pub fn length(&self) -> f64 {
        self.elements.iter().map(Element::length).sum()
    }

    /// Signed enclosed area: positive when the contour runs counter-clockwise.
    pub fn signed_area(&self) -> f64 {
        self.elements.iter().map(Element::area_term).sum()
    }

    pub fn is_ccw(&self) -> bool {
        self.signed_area() > 0.0
    }

    /// The same contour travelled the other way.
    pub fn reversed(&self) -> Contour {
        Contour {
            elements: self.elements.iter().rev().map(Element::reversed).collect(),
            layer: self.layer.clone(),
            handles: self.handles.iter().rev().cloned().collect(),
        }
    }

    pub fn start_point(&self) -> Option<Point> {
        self.elements.first().map(Element::start)
    }

    /// Shortest distance from `p` to the contour.
    pub fn distance_to(&self, p: Point) -> f64 {
        self.elements
            .iter()
            .map(|e| e.distance_to(p))
            .fold(f64::INFINITY, f64::min)
    }

    /// Whether `p` lies inside the contour (non-zero winding number), exactly for arcs too.
    /// Points on the contour itself may go either way.
    ///
    /// A line adds the angle it subtends at `p`. An arc adds the angle its chord subtends, plus
    /// one turn in the arc's sense when `p` lies in the region between the chord and the arc
    /// (inside the circle, on the arc's side of the chord): the closed loop "arc, then chord
    /// back" winds once round exactly those points.
    pub fn contains(&self, p: Point) -> bool {
        let mut total = 0.0;
        for e in &self.elements {
            match e {
                Element::Line(s) => total += angle_between(s.start - p, s.end - p),
                Element::Arc(a) if a.is_full_circle() => {
                    if p.distance(a.centre) < a.radius {
                        total += std::f64::consts::TAU * a.sweep.signum();
                    }
                }
                Element::Arc(a) => {
                    // Each half of the arc in turn: the angle its chord subtends at `p`, and a
                    // whole turn more when `p` lies between that chord and the arc. Halving
                    // keeps the arc's centre, which lies on the chord of a half circle (where
                    // the chord's angle is ±π either way), off both chords.
                    let inside_circle = p.distance(a.centre) < a.radius;
                    for (s, mid, t) in [(0.0, 0.25, 0.5), (0.5, 0.75, 1.0)] {
                        let (s, mid, t) = (a.point_at(s), a.point_at(mid), a.point_at(t));
                        total += angle_between(s - p, t - p);
                        let side = |q: Point| (t - s).cross(q - s);
                        if inside_circle && side(p) * side(mid) > 0.0 {
                            total += std::f64::consts::TAU * a.sweep.signum();
                        }
                    }
                }
            }
        }
        (total / std::f64::consts::TAU).round() != 0.0
    }

    /// Axis-aligned bounds `(min, max)` of the contour, arcs included exactly.
    pub fn bounds(&self) -> Option<(Point, Point)> {
        self.bounding_box().map(Bounds::corners)
    }

    /// The axis-aligned box of the contour, arcs included exactly.
    pub fn bounding_box(&self) -> Option<Bounds> {
        bounds_of_elements(&self.elements)
    }
}

/// The axis-aligned box of some pieces, arcs included exactly; `None` when there are none.
pub fn bounds_of_elements(elements: &[Element]) -> Option<Bounds> {
    let mut pts = Vec::new();
    for e in elements {
        pts.push(e.start());
        pts.push(e.end());
        if let Element::Arc(a) = e {
            for k in 0..4 {
                let ang = k as f64 * std::f64::consts::FRAC_PI_2;
                if a.contains_angle(ang) {
                    pts.push(a.point_at_angle(ang));
                }
            }
        }
    }
    Bounds::of_points(&pts)
}

/// The signed angle from `u` to `v` in (−π, π].
fn angle_between(u: Vec2, v: Vec2) -> f64 {
    u.cross(v).atan2(u.dot(v))
}

/// Axis-aligned bounds `(min, max)` of a set of points; `None` when empty.
pub fn bounds_of(points: &[Point]) -> Option<(Point, Point)> {
    Bounds::of_points(points).map(Bounds::corners)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An arc of `sweep_deg` about (3, −2), radius 5, from angle 20°, closed by its chord.
    fn arc_and_chord(sweep_deg: f64, ccw: bool) -> (Contour, ArcSegment) {
        let sweep = sweep_deg.to_radians() * if ccw { 1.0 } else { -1.0 };
        let arc = ArcSegment {
            centre: Point::new(3.0, -2.0),
            radius: 5.0,
            start_angle: 20f64.to_radians(),
            sweep,
        };
        let chord = Segment::new(arc.end_point(), arc.start_point());
        let c = Contour::new(vec![Element::Arc(arc), Element::Line(chord)], "0", vec![]).unwrap();
        (c, arc)
    }

    #[test]
    fn arcs_of_half_a_turn_and_about_it_enclose_what_they_bound() {
        // The region an arc and its chord bound is the disc cut by the chord's line, on the side
        // of the arc's middle, whatever the sweep. Points on a grid through the centre (which a
        // half circle's chord passes through) and along the chord's line itself.
        for sweep in [179.9, 180.0, 180.1, 359.9, 90.0] {
            for ccw in [true, false] {
                let (c, arc) = arc_and_chord(sweep, ccw);
                let (s, t, mid) = (arc.start_point(), arc.end_point(), arc.point_at(0.5));
                let side = |q: Point| (t - s).cross(q - s);
                let mut points = vec![arc.centre, s.midpoint(t)];
                for i in -12..=12 {
                    for j in -12..=12 {
                        points.push(arc.centre + Vec2::new(0.45 * i as f64, 0.45 * j as f64));
                    }
                }
                for p in points {
                    let (d, h) = (p.distance(arc.centre), side(p));
                    // Leave out points within 1e-9 of the boundary (the arc, and the chord
                    // inside the disc), where either answer is fair.
                    let on_chord_line = h.abs() <= 1e-9 * (t - s).length();
                    if (d - 5.0).abs() < 1e-9 || (on_chord_line && d < 5.0) {
                        continue;
                    }
                    let truth = d < 5.0 && h * side(mid) > 0.0;
                    assert_eq!(c.contains(p), truth, "sweep {sweep} ccw {ccw} at {p:?}");
                }
            }
        }
    }

    #[test]
    fn a_contour_started_within_a_piece_is_the_same_path() {
        let (c, _) = arc_and_chord(180.0, true);
        for index in 0..2 {
            let moved = c.starting_within(index, 0.3).unwrap();
            assert_eq!(moved.elements().len(), 3);
            let start = c.elements()[index].point_at(0.3);
            assert!(moved.elements()[0].start().distance(start) < 1e-12);
            assert!(moved.elements()[2].end().distance(start) < 1e-12);
            assert!((moved.length() - c.length()).abs() < 1e-12);
            assert!((moved.signed_area() - c.signed_area()).abs() < 1e-9);
            // Every piece ends where the next starts (Contour::new checks it).
            assert!(Contour::new(moved.elements().to_vec(), "0", vec![]).is_ok());
        }
        assert!(c.starting_within(2, 0.5).is_none());
        assert!(c.starting_within(0, 1.0).is_none());
    }

    #[test]
    fn a_circle_drawn_as_two_half_circles_holds_its_centre() {
        let c0 = Point::new(160.0, 50.0);
        let half = |start: f64| {
            Element::Arc(ArcSegment {
                centre: c0,
                radius: 10.0,
                start_angle: start,
                sweep: std::f64::consts::PI,
            })
        };
        let c = Contour::new(vec![half(0.0), half(std::f64::consts::PI)], "0", vec![]).unwrap();
        for p in [
            c0,
            c0 + Vec2::new(9.9, 0.0),
            c0 + Vec2::new(-9.9, 0.0),
            c0 + Vec2::new(0.0, 9.9),
        ] {
            assert!(c.contains(p), "{p:?}");
        }
        assert!(!c.contains(c0 + Vec2::new(10.1, 0.0)));
        // An obround slot, its half circles' centres on their chords and inside the slot.
        let (a, b, r) = (Point::new(60.0, 50.0), Point::new(120.0, 50.0), 8.0);
        let up = Vec2::new(0.0, r);
        let slot = Contour::new(
            vec![
                Element::Line(Segment::new(a - up, b - up)),
                Element::Arc(ArcSegment {
                    centre: b,
                    radius: r,
                    start_angle: -std::f64::consts::FRAC_PI_2,
                    sweep: std::f64::consts::PI,
                }),
                Element::Line(Segment::new(b + up, a + up)),
                Element::Arc(ArcSegment {
                    centre: a,
                    radius: r,
                    start_angle: std::f64::consts::FRAC_PI_2,
                    sweep: std::f64::consts::PI,
                }),
            ],
            "0",
            vec![],
        )
        .unwrap();
        for k in -10..=80 {
            // Off the ends at 52 and 128 (the boundary), through both arc centres at 60 and 120.
            let k = if k == 10 {
                9.5
            } else if k == 70 {
                69.5
            } else {
                k as f64
            };
            let p = Point::new(50.5 + k, 50.0);
            let inside = p.x > a.x - r && p.x < b.x + r;
            assert_eq!(slot.contains(p), inside, "{p:?}");
        }
    }

    fn square() -> Contour {
        let p = [
            Point::new(0.0, 0.0),
            Point::new(2.0, 0.0),
            Point::new(2.0, 2.0),
            Point::new(0.0, 2.0),
        ];
        Contour {
            elements: (0..4)
                .map(|i| Element::Line(Segment::new(p[i], p[(i + 1) % 4])))
                .collect(),
            layer: "0".into(),
            handles: vec![],
        }
    }

    #[test]
    fn area_orientation_and_containment() {
        let s = square();
        assert!((s.signed_area() - 4.0).abs() < 1e-15);
        assert!((s.reversed().signed_area() + 4.0).abs() < 1e-15);
        assert!(s.contains(Point::new(1.0, 1.0)));
        assert!(!s.contains(Point::new(3.0, 1.0)));
    }

    #[test]
    fn circle_area_is_pi_r_squared() {
        let c = Contour {
            elements: vec![Element::Arc(ArcSegment::circle(Point::new(5.0, 1.0), 2.0))],
            layer: "0".into(),
            handles: vec![],
        };
        assert!((c.signed_area() - 4.0 * std::f64::consts::PI).abs() < 1e-12);
        assert!(c.contains(Point::new(5.5, 1.5)));
        assert!(!c.contains(Point::new(8.0, 1.0)));
        let (lo, hi) = c.bounds().unwrap();
        assert!((lo.x - 3.0).abs() < 1e-12 && (hi.y - 3.0).abs() < 1e-12);
    }

    #[test]
    fn new_refuses_empty_and_open_chains() {
        assert_eq!(Contour::new(vec![], "0", vec![]), Err(ContourError::Empty));
        let (a, b, c) = (
            Point::new(0.0, 0.0),
            Point::new(4.0, 0.0),
            Point::new(4.0, 3.0),
        );
        let open = vec![
            Element::Line(Segment::new(a, b)),
            Element::Line(Segment::new(b, c)),
        ];
        let Err(ContourError::Open { index, gap, at }) = Contour::new(open.clone(), "0", vec![])
        else {
            panic!("an open chain was accepted");
        };
        assert_eq!((index, at), (1, c));
        assert!((gap - 5.0).abs() < 1e-12);
        let mut closed = open;
        closed.push(Element::Line(Segment::new(
            c,
            a + Vec2::new(0.5 * JOIN_LIMIT, 0.0),
        )));
        let contour = Contour::new(closed, "L", vec!["1F".into()]).unwrap();
        assert_eq!(
            (contour.layer(), contour.handles()),
            ("L", &["1F".to_string()][..])
        );
        assert!((contour.length() - 12.0).abs() < JOIN_LIMIT);
    }
}
