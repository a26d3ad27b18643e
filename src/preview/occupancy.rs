//! A coarse occupancy grid of what the preview draws, for placing labels in free space.
//!
//! The drawing area is cut into square cells, one bit each. Every drawn line marks the cells its
//! stroke touches, every marker and placed label the cells of its box; a label's candidate box
//! is then scored by the marked cells it covers. Marking costs the length drawn over the cell
//! size, a query the cells of its box, so the whole placement stays linear in the number of
//! features (no label is compared with every other or with every path).
//!
//! Marking is conservative: a cell is marked when any point within the stroke's half-width of
//! the line may lie in it, so a box whose cells are all free touches no drawn stroke.

use super::frame::Bounds;
use crate::geom::{Move, Point, Vec2};

/// The grid has at most this many cells (32 Mi bits, 4 MiB); larger drawings get larger cells.
pub const MAX_CELLS: usize = 1 << 25;

/// The occupancy grid over one drawing area (drawing mm, y up).
#[derive(Debug, Clone)]
pub struct Occupancy {
    area: Bounds,
    cell: f64,
    nx: usize,
    ny: usize,
    /// Words per row.
    stride: usize,
    bits: Vec<u64>,
}

impl Occupancy {
    /// A grid over `area` with cells of about `finest` mm, or larger where the area would need
    /// more than [`MAX_CELLS`] cells.
    pub fn new(area: Bounds, finest: f64) -> Occupancy {
        let (w, h) = (area.width().max(0.0), area.height().max(0.0));
        let finest = if finest.is_finite() && finest > 0.0 {
            finest
        } else {
            1.0
        };
        let mut cell = finest.max((w * h / MAX_CELLS as f64).sqrt());
        if !cell.is_finite() || cell <= 0.0 {
            cell = finest;
        }
        // Long thin areas: keep each side within the budget too.
        cell = cell.max(w.max(h) / MAX_CELLS as f64);
        let count = |len: f64, cell: f64| ((len / cell).ceil() as usize).clamp(1, MAX_CELLS);
        let (mut nx, mut ny) = (count(w, cell), count(h, cell));
        while nx.saturating_mul(ny) > MAX_CELLS {
            cell *= 2.0;
            nx = count(w, cell);
            ny = count(h, cell);
        }
        let stride = nx.div_ceil(64);
        Occupancy {
            area,
            cell,
            nx,
            ny,
            stride,
            bits: vec![0; stride * ny],
        }
    }

    /// The side of a cell (mm).
    pub fn cell(&self) -> f64 {
        self.cell
    }

    /// Whether the box lies wholly inside the grid's area.
    pub fn holds(&self, lo: Point, hi: Point) -> bool {
        lo.is_finite()
            && hi.is_finite()
            && lo.x >= self.area.min.x
            && lo.y >= self.area.min.y
            && hi.x <= self.area.max.x
            && hi.y <= self.area.max.y
    }

    /// The cells `(x0, x1, y0, y1)` (inclusive) the box touches, clipped to the grid; `None`
    /// when it misses the grid or is not finite.
    fn cells(&self, lo: Point, hi: Point) -> Option<(usize, usize, usize, usize)> {
        if !lo.is_finite() || !hi.is_finite() || lo.x > hi.x || lo.y > hi.y {
            return None;
        }
        let fx = |x: f64| (x - self.area.min.x) / self.cell;
        let fy = |y: f64| (y - self.area.min.y) / self.cell;
        let (x0, x1, y0, y1) = (fx(lo.x), fx(hi.x), fy(lo.y), fy(hi.y));
        if x1 < 0.0 || y1 < 0.0 || x0 >= self.nx as f64 || y0 >= self.ny as f64 {
            return None;
        }
        let clip = |v: f64, n: usize| (v.max(0.0).floor() as usize).min(n - 1);
        Some((
            clip(x0, self.nx),
            clip(x1, self.nx),
            clip(y0, self.ny),
            clip(y1, self.ny),
        ))
    }

    /// Marks every cell the box touches.
    pub fn mark_box(&mut self, lo: Point, hi: Point) {
        let Some((x0, x1, y0, y1)) = self.cells(lo, hi) else {
            return;
        };
        for y in y0..=y1 {
            let row = &mut self.bits[y * self.stride..(y + 1) * self.stride];
            for (w, word) in row.iter_mut().enumerate().take(x1 / 64 + 1).skip(x0 / 64) {
                *word |= range_mask(w, x0, x1);
            }
        }
    }

    /// How many marked cells the box touches.
    pub fn count_box(&self, lo: Point, hi: Point) -> usize {
        let Some((x0, x1, y0, y1)) = self.cells(lo, hi) else {
            return 0;
        };
        let mut n = 0;
        for y in y0..=y1 {
            let row = &self.bits[y * self.stride..(y + 1) * self.stride];
            for (w, word) in row.iter().enumerate().take(x1 / 64 + 1).skip(x0 / 64) {
                n += (word & range_mask(w, x0, x1)).count_ones() as usize;
            }
        }
        n
    }

    /// Marks the cells within `half_width` of the segment `a`–`b` (and a little more: a short
    /// segment marks its whole box, a long one the boxes around points a cell apart, each
    /// reaching half a cell beyond the stroke, which covers every point of the stroke).
    pub fn mark_segment(&mut self, a: Point, b: Point, half_width: f64) {
        let hw = if half_width.is_finite() {
            half_width.max(0.0)
        } else {
            0.0
        };
        let reach = hw + 0.5 * self.cell;
        let grown = Bounds {
            min: Point::new(self.area.min.x - reach, self.area.min.y - reach),
            max: Point::new(self.area.max.x + reach, self.area.max.y + reach),
        };
        let Some((a, b)) = clip_segment(a, b, &grown) else {
            return;
        };
        let r = Vec2::new(reach, reach);
        let len = a.distance(b);
        if len <= 2.0 * self.cell {
            let lo = Point::new(a.x.min(b.x), a.y.min(b.y));
            let hi = Point::new(a.x.max(b.x), a.y.max(b.y));
            self.mark_box(lo - r, hi + r);
            return;
        }
        let steps = (len / self.cell).ceil() as usize;
        let mut last = None;
        for k in 0..=steps {
            let p = a.lerp(b, k as f64 / steps as f64);
            // Neighbouring steps often touch the same cells: mark each run of them once.
            let cells = self.cells(p - r, p + r);
            if cells.is_some() && cells != last {
                self.mark_box(p - r, p + r);
                last = cells;
            }
        }
    }

    /// Marks a polyline through the points (non-finite points break it).
    pub fn mark_polyline(&mut self, points: &[Point], half_width: f64) {
        for w in points.windows(2) {
            if w[0].is_finite() && w[1].is_finite() {
                self.mark_segment(w[0], w[1], half_width);
            }
        }
        if let [p] = points
            && p.is_finite()
        {
            self.mark_segment(*p, *p, half_width);
        }
    }

    /// How many chords follow an arc of radius `r` turning `sweep` radians within a quarter
    /// cell (a chord of angle φ sags r (1 − cos(φ/2))), and their sag.
    pub fn chords(&self, r: f64, sweep: f64) -> (usize, f64) {
        let tol = 0.25 * self.cell;
        if !(r.is_finite() && sweep.is_finite()) || r <= tol {
            return (1, if r.is_finite() { r.max(0.0) } else { 0.0 });
        }
        let step = 2.0 * (1.0 - tol / r).acos();
        let n = ((sweep.abs() / step).ceil() as usize).clamp(1, 256);
        let sag = r * (1.0 - (0.5 * sweep.abs() / n as f64).cos());
        (n, sag.max(0.0))
    }

    /// Marks a run of moves from `start`, each arc followed by chords within a quarter cell
    /// (their sag added to the half-width).
    pub fn mark_moves(&mut self, start: Point, moves: &[Move], half_width: f64) {
        let mut from = start;
        for m in moves {
            match *m {
                Move::Line { to } => {
                    if from.is_finite() && to.is_finite() {
                        self.mark_segment(from, to, half_width);
                    }
                }
                Move::Arc { centre, .. } => {
                    let (n, sag) = self.chords(from.distance(centre), m.sweep(from));
                    let mut at = from;
                    for k in 1..=n {
                        let p = m.point_at(from, k as f64 / n as f64);
                        if at.is_finite() && p.is_finite() {
                            self.mark_segment(at, p, half_width + sag);
                        }
                        at = p;
                    }
                }
            }
            from = m.end();
        }
    }
}

/// The bits of word `w` for the cells `x0..=x1`.
fn range_mask(w: usize, x0: usize, x1: usize) -> u64 {
    let lo = (w * 64).max(x0) - w * 64;
    let hi = ((w * 64 + 63).min(x1)) - w * 64;
    let upper = if hi == 63 {
        u64::MAX
    } else {
        (1u64 << (hi + 1)) - 1
    };
    upper & !((1u64 << lo) - 1)
}

/// The part of the segment `a`–`b` inside the box (Liang–Barsky); `None` when it misses.
pub fn clip_segment(a: Point, b: Point, bounds: &Bounds) -> Option<(Point, Point)> {
    if !a.is_finite() || !b.is_finite() {
        return None;
    }
    let d = b - a;
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [
        (-d.x, a.x - bounds.min.x),
        (d.x, bounds.max.x - a.x),
        (-d.y, a.y - bounds.min.y),
        (d.y, bounds.max.y - a.y),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let t = q / p;
            if p < 0.0 {
                t0 = t0.max(t);
            } else {
                t1 = t1.min(t);
            }
        }
    }
    (t0 <= t1).then(|| (a + d * t0, a + d * t1))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn area(w: f64, h: f64) -> Bounds {
        Bounds {
            min: Point::new(0.0, 0.0),
            max: Point::new(w, h),
        }
    }

    #[test]
    fn boxes_are_marked_and_counted_across_words() {
        let mut g = Occupancy::new(area(200.0, 10.0), 1.0);
        assert_eq!(
            g.count_box(Point::new(0.0, 0.0), Point::new(200.0, 10.0)),
            0
        );
        // Cells 60..=130 of row 2: across the first and second words and into the third.
        g.mark_box(Point::new(60.5, 2.5), Point::new(130.5, 2.5));
        assert_eq!(
            g.count_box(Point::new(0.0, 0.0), Point::new(200.0, 10.0)),
            71
        );
        assert_eq!(
            g.count_box(Point::new(0.0, 3.1), Point::new(200.0, 10.0)),
            0
        );
        assert_eq!(
            g.count_box(Point::new(64.0, 2.0), Point::new(127.9, 2.9)),
            64
        );
        // Outside the grid: nothing marked, nothing counted, no panic.
        g.mark_box(Point::new(-50.0, -50.0), Point::new(-40.0, -40.0));
        g.mark_box(Point::new(f64::NAN, 0.0), Point::new(1.0, 1.0));
        assert_eq!(
            g.count_box(Point::new(-9.0, -9.0), Point::new(-1.0, -1.0)),
            0
        );
        assert!(!g.holds(Point::new(-1.0, 0.0), Point::new(1.0, 1.0)));
    }

    #[test]
    fn a_segment_marks_every_cell_its_stroke_touches() {
        let mut g = Occupancy::new(area(100.0, 100.0), 1.0);
        let (a, b) = (Point::new(10.0, 10.0), Point::new(90.0, 70.0));
        g.mark_segment(a, b, 1.5);
        // Every point within 1.5 of the segment is in a marked cell.
        for k in 0..=200 {
            let p = a.lerp(b, k as f64 / 200.0);
            let n = Vec2::new(-0.6, 0.8) * 1.49;
            for q in [p + n, p - n, p] {
                assert_eq!(g.count_box(q, q), 1, "{q:?}");
            }
        }
        // A box well clear of it is free.
        assert_eq!(
            g.count_box(Point::new(60.0, 10.0), Point::new(90.0, 30.0)),
            0
        );
    }

    #[test]
    fn arcs_are_marked_all_along() {
        let mut g = Occupancy::new(area(100.0, 100.0), 0.5);
        let c = Point::new(50.0, 50.0);
        let arc = [Move::Arc {
            to: Point::new(30.0, 50.0),
            centre: c,
            ccw: true,
        }];
        g.mark_moves(Point::new(70.0, 50.0), &arc, 0.3);
        // Every point of the half turn (and of the stroke) is in a marked cell; the centre and
        // the lower half are free.
        for k in 0..=400 {
            let t = std::f64::consts::PI * k as f64 / 400.0;
            for r in [19.71, 20.0, 20.29] {
                let p = c + Vec2::from_angle(t) * r;
                assert_eq!(g.count_box(p, p), 1, "{p:?}");
            }
        }
        assert_eq!(
            g.count_box(Point::new(45.0, 45.0), Point::new(55.0, 55.0)),
            0
        );
        assert_eq!(
            g.count_box(Point::new(30.0, 20.0), Point::new(70.0, 48.0)),
            0
        );
        let (n, sag) = g.chords(20.0, std::f64::consts::PI);
        assert!(n > 1 && sag <= 0.125 + 1e-12, "{n} {sag}");
    }

    #[test]
    fn huge_areas_get_coarser_cells_within_the_budget() {
        let g = Occupancy::new(area(1e7, 1e7), 0.5);
        assert!(g.nx * g.ny <= MAX_CELLS);
        assert!(g.cell() >= 1e7 / 6000.0);
        let thin = Occupancy::new(area(1e9, 0.0), 0.5);
        assert!(thin.nx * thin.ny <= MAX_CELLS);
    }

    #[test]
    fn segments_are_clipped() {
        let b = area(10.0, 10.0);
        let (p, q) = clip_segment(Point::new(-10.0, 5.0), Point::new(20.0, 5.0), &b).unwrap();
        assert!((p.x - 0.0).abs() < 1e-12 && (q.x - 10.0).abs() < 1e-12);
        assert!(clip_segment(Point::new(-10.0, 20.0), Point::new(20.0, 20.0), &b).is_none());
        assert!(clip_segment(Point::new(f64::NAN, 5.0), Point::new(20.0, 5.0), &b).is_none());
    }
}
