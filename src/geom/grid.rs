//! A uniform grid over axis-aligned boxes: which items may lie near a point, in time that does
//! not grow with the number of items.
//!
//! Every stage that measures a point against "every finished edge" (the planner's lead rules,
//! the checker's scrap rules) asks the grid instead, then measures exactly against the few items
//! it names. The grid only ever narrows the search: an item it leaves out of [`BoxGrid::near`]
//! is certainly farther than the radius asked about, so exact answers stay exact.
//!
//! # Layout
//!
//! The cells are squares of side `cell`, chosen from the items themselves: the median of the
//! boxes' larger sides, but never so small that the grid would have more than
//! [`CELLS_PER_ITEM`] cells per item. Each item is listed in every cell its box touches, except
//! items whose box spans more than [`MAX_CELLS_PER_ITEM`] cells (a sheet's outline, say): those
//! are "wide" and every query names them. Building costs O(n + cells); a query costs the cells
//! its box touches plus what they list.

use super::{Bounds, Point};

/// The grid has at most this many cells per item (and at least one cell).
pub const CELLS_PER_ITEM: usize = 4;

/// An item whose box touches more cells than this is kept apart and named by every query.
pub const MAX_CELLS_PER_ITEM: usize = 64;

/// Items by their boxes, on a uniform grid (see the module docs).
#[derive(Debug, Clone)]
pub struct BoxGrid {
    boxes: Vec<Bounds>,
    origin: Point,
    cell: f64,
    nx: usize,
    ny: usize,
    /// Cell `k` lists `items[starts[k]..starts[k + 1]]`.
    starts: Vec<usize>,
    items: Vec<usize>,
    /// Items named by every query.
    wide: Vec<usize>,
}

impl BoxGrid {
    /// The grid over these boxes; item `k` is `boxes[k]`. Boxes that are not finite are kept as
    /// wide items, so they are never missed.
    pub fn new(boxes: Vec<Bounds>) -> BoxGrid {
        let finite: Vec<&Bounds> = boxes.iter().filter(|b| is_finite(b)).collect();
        let Some(extent) = finite.iter().map(|b| **b).reduce(Bounds::union) else {
            return BoxGrid {
                wide: (0..boxes.len()).collect(),
                boxes,
                origin: Point::ORIGIN,
                cell: 1.0,
                nx: 0,
                ny: 0,
                starts: vec![0],
                items: Vec::new(),
            };
        };
        let cell = cell_size(&finite, &extent);
        let (w, h) = (extent.max.x - extent.min.x, extent.max.y - extent.min.y);
        let nx = ((w / cell).floor() as usize + 1).max(1);
        let ny = ((h / cell).floor() as usize + 1).max(1);
        let mut grid = BoxGrid {
            boxes,
            origin: extent.min,
            cell,
            nx,
            ny,
            starts: Vec::new(),
            items: Vec::new(),
            wide: Vec::new(),
        };
        grid.fill();
        grid
    }

    /// Lists each item in its cells (counting first, then placing: two passes, no per-cell
    /// vectors).
    fn fill(&mut self) {
        let mut counts = vec![0usize; self.nx * self.ny + 1];
        let mut placed: Vec<(usize, [usize; 4])> = Vec::with_capacity(self.boxes.len());
        for (k, b) in self.boxes.iter().enumerate() {
            match self.cell_range(b) {
                Some(r) if (r[1] - r[0] + 1) * (r[3] - r[2] + 1) <= MAX_CELLS_PER_ITEM => {
                    for j in r[2]..=r[3] {
                        for i in r[0]..=r[1] {
                            counts[j * self.nx + i] += 1;
                        }
                    }
                    placed.push((k, r));
                }
                _ => self.wide.push(k),
            }
        }
        let mut starts = Vec::with_capacity(counts.len());
        let mut total = 0;
        for c in &counts {
            starts.push(total);
            total += c;
        }
        let mut next = starts.clone();
        let mut items = vec![0usize; total];
        for (k, r) in placed {
            for j in r[2]..=r[3] {
                for i in r[0]..=r[1] {
                    let cell = j * self.nx + i;
                    items[next[cell]] = k;
                    next[cell] += 1;
                }
            }
        }
        self.starts = starts;
        self.items = items;
    }

    /// The cells `[i0, i1, j0, j1]` (inclusive) a box touches, clamped to the grid; `None` for a
    /// box that is not finite or lies wholly off the grid.
    fn cell_range(&self, b: &Bounds) -> Option<[usize; 4]> {
        if !is_finite(b) || self.nx == 0 {
            return None;
        }
        let to_cell = |v: f64, o: f64, n: usize| -> Option<usize> {
            let c = ((v - o) / self.cell).floor();
            if c < 0.0 {
                Some(0)
            } else if c >= n as f64 {
                Some(n - 1)
            } else {
                Some(c as usize)
            }
        };
        let lo_off = b.max.x < self.origin.x || b.max.y < self.origin.y;
        let hi_x = self.origin.x + self.nx as f64 * self.cell;
        let hi_y = self.origin.y + self.ny as f64 * self.cell;
        if lo_off || b.min.x > hi_x || b.min.y > hi_y {
            return None;
        }
        Some([
            to_cell(b.min.x, self.origin.x, self.nx)?,
            to_cell(b.max.x, self.origin.x, self.nx)?,
            to_cell(b.min.y, self.origin.y, self.ny)?,
            to_cell(b.max.y, self.origin.y, self.ny)?,
        ])
    }

    /// Every item listed in a cell that `query` touches (an item spread over several cells is
    /// named once for each), wide items not included.
    fn listed<'a>(&'a self, query: &Bounds) -> impl Iterator<Item = usize> + 'a {
        let c = self.cell_range(query);
        c.into_iter().flat_map(move |c| {
            (c[2]..=c[3]).flat_map(move |j| {
                let row = j * self.nx;
                self.items[self.starts[row + c[0]]..self.starts[row + c[1] + 1]]
                    .iter()
                    .copied()
            })
        })
    }

    /// The square of half side `radius` (at least 0) about `p`.
    fn square_about(p: Point, radius: f64) -> Bounds {
        let r = radius.max(0.0);
        Bounds {
            min: Point::new(p.x - r, p.y - r),
            max: Point::new(p.x + r, p.y + r),
        }
    }

    /// The number of items.
    pub fn len(&self) -> usize {
        self.boxes.len()
    }

    pub fn is_empty(&self) -> bool {
        self.boxes.is_empty()
    }

    /// Item `k`'s box.
    pub fn bounds(&self, k: usize) -> Bounds {
        self.boxes[k]
    }

    /// Every item whose box lies within `radius` of `p` (distance from `p` to the box, 0 inside
    /// it), in increasing order of index. Items left out are certainly farther than `radius`.
    /// `out` is cleared first.
    pub fn near(&self, p: Point, radius: f64, out: &mut Vec<usize>) {
        out.clear();
        let r = radius.max(0.0);
        let query = Self::square_about(p, r);
        out.extend(
            self.listed(&query)
                .filter(|&k| self.boxes[k].distance_to(p) <= r),
        );
        out.extend(self.wide.iter().copied());
        out.sort_unstable();
        out.dedup();
    }

    /// Every item whose box meets `query` (touching counts), in increasing order of index; wide
    /// items always. `out` is cleared first.
    pub fn overlapping(&self, query: &Bounds, out: &mut Vec<usize>) {
        out.clear();
        out.extend(self.listed(query).filter(|&k| {
            let b = &self.boxes[k];
            b.min.x <= query.max.x
                && query.min.x <= b.max.x
                && b.min.y <= query.max.y
                && query.min.y <= b.max.y
        }));
        out.extend(self.wide.iter().copied());
        out.sort_unstable();
        out.dedup();
    }

    /// Whether `ok(k)` holds for every item whose box lies within `radius` of `p` (and for every
    /// wide item); stops at the first that fails. Items spread over several cells may be asked
    /// more than once, and some items a little farther than `radius` may be asked too; items
    /// left out are certainly farther. Allocates nothing.
    pub fn all_near(&self, p: Point, radius: f64, mut ok: impl FnMut(usize) -> bool) -> bool {
        let r = radius.max(0.0);
        let query = Self::square_about(p, r);
        self.listed(&query)
            .all(|k| self.boxes[k].distance_to(p) > r || ok(k))
            && self.wide.iter().all(|&k| ok(k))
    }

    /// The least of `distance(k)` over every item, found by asking ever wider circles about `p`:
    /// a circle of radius `R` settles it once some item within it is nearer than `R` (every item
    /// left out is farther than `R`). `distance(k)` must be at least item `k`'s box distance
    /// from `p`. Infinite when there are no items.
    pub fn nearest(&self, p: Point, mut distance: impl FnMut(usize) -> f64) -> f64 {
        let mut near = Vec::new();
        let mut radius = self.cell;
        // Past this radius the circle holds every box on the grid: ask them all.
        let extent = Bounds {
            min: self.origin,
            max: Point::new(
                self.origin.x + self.nx as f64 * self.cell,
                self.origin.y + self.ny as f64 * self.cell,
            ),
        };
        let all = extent.distance_to(p) + extent.min.distance(extent.max);
        while radius <= all {
            self.near(p, radius, &mut near);
            let best = near
                .iter()
                .map(|&k| distance(k))
                .fold(f64::INFINITY, f64::min);
            if best <= radius {
                return best;
            }
            radius *= 2.0;
        }
        (0..self.boxes.len())
            .map(distance)
            .fold(f64::INFINITY, f64::min)
    }
}

fn is_finite(b: &Bounds) -> bool {
    b.min.x.is_finite() && b.min.y.is_finite() && b.max.x.is_finite() && b.max.y.is_finite()
}

/// The cell side: the median of the boxes' larger sides, raised so that the grid has at most
/// about [`CELLS_PER_ITEM`] cells per item (3 × that for boxes along a line); never zero.
fn cell_size(boxes: &[&Bounds], extent: &Bounds) -> f64 {
    let mut sides: Vec<f64> = boxes
        .iter()
        .map(|b| (b.max.x - b.min.x).max(b.max.y - b.min.y))
        .collect();
    let mid = sides.len() / 2;
    let median = *sides.select_nth_unstable_by(mid, f64::total_cmp).1;
    let area = (extent.max.x - extent.min.x) * (extent.max.y - extent.min.y);
    let cells = (CELLS_PER_ITEM * boxes.len()) as f64;
    let least = (area / cells).sqrt();
    let span = (extent.max.x - extent.min.x).max(extent.max.y - extent.min.y);
    // Also at least span / cells: boxes strung along one line (no area) then get at most that
    // many cells along it, so the grid never has more than about 3 × CELLS_PER_ITEM cells per
    // item.
    let cell = median.max(least).max(span / cells);
    if cell > 0.0 && cell.is_finite() {
        cell
    } else if span > 0.0 {
        span
    } else {
        1.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square(x: f64, y: f64, side: f64) -> Bounds {
        Bounds {
            min: Point::new(x, y),
            max: Point::new(x + side, y + side),
        }
    }

    /// A deterministic scatter of boxes of varied size, and one covering them all.
    fn scatter() -> Vec<Bounds> {
        let mut random = crate::geom::random::XorShift::from_state(0x2545_f491_4f6c_dd1d_u64);
        let mut next = || random.next_f64();
        let mut boxes: Vec<Bounds> = (0..2000)
            .map(|_| square(1000.0 * next(), 600.0 * next(), 1.0 + 40.0 * next()))
            .collect();
        boxes.push(square(-10.0, -10.0, 1100.0));
        boxes
    }

    #[test]
    fn near_names_exactly_the_boxes_within_the_radius() {
        let boxes = scatter();
        let grid = BoxGrid::new(boxes.clone());
        let mut out = Vec::new();
        for (i, &(x, y, r)) in [
            (500.0, 300.0, 0.0),
            (12.5, 590.0, 7.0),
            (-50.0, -50.0, 30.0),
            (2000.0, 2000.0, 5.0),
            (333.0, 111.0, 250.0),
        ]
        .iter()
        .enumerate()
        {
            let p = Point::new(x, y);
            grid.near(p, r, &mut out);
            let brute: Vec<usize> = (0..boxes.len())
                .filter(|&k| boxes[k].distance_to(p) <= r)
                .collect();
            // The wide box is always named; everything else exactly when within the radius.
            let named: Vec<usize> = out
                .iter()
                .copied()
                .filter(|&k| boxes[k].distance_to(p) <= r)
                .collect();
            assert_eq!(named, brute, "query {i}");
            assert!(
                out.iter()
                    .all(|&k| k == 2000 || boxes[k].distance_to(p) <= r)
            );
        }
    }

    #[test]
    fn overlapping_names_exactly_the_boxes_that_meet_the_query() {
        let boxes = scatter();
        let grid = BoxGrid::new(boxes.clone());
        let meets = |a: &Bounds, b: &Bounds| {
            a.min.x <= b.max.x && b.min.x <= a.max.x && a.min.y <= b.max.y && b.min.y <= a.max.y
        };
        let mut out = Vec::new();
        for q in [
            square(100.0, 100.0, 5.0),
            square(-30.0, 590.0, 20.0),
            square(5000.0, 0.0, 1.0),
        ] {
            grid.overlapping(&q, &mut out);
            let brute: Vec<usize> = (0..boxes.len()).filter(|&k| meets(&boxes[k], &q)).collect();
            let named: Vec<usize> = out
                .iter()
                .copied()
                .filter(|&k| meets(&boxes[k], &q))
                .collect();
            assert_eq!(named, brute);
            assert!(out.iter().all(|&k| k == 2000 || meets(&boxes[k], &q)));
        }
    }

    #[test]
    fn all_near_asks_every_box_within_the_radius() {
        let boxes = scatter();
        let grid = BoxGrid::new(boxes.clone());
        let p = Point::new(420.0, 250.0);
        for r in [0.0, 3.0, 60.0] {
            let mut asked = vec![false; boxes.len()];
            assert!(grid.all_near(p, r, |k| {
                asked[k] = true;
                true
            }));
            for (k, b) in boxes.iter().enumerate() {
                if b.distance_to(p) <= r {
                    assert!(asked[k], "box {k} within {r} not asked");
                }
            }
            // Stops at the first failure, and reports it.
            let within = (0..boxes.len()).find(|&k| k < 2000 && boxes[k].distance_to(p) <= r);
            if let Some(bad) = within {
                assert!(!grid.all_near(p, r, |k| k != bad));
            }
        }
    }

    #[test]
    fn nearest_agrees_with_the_brute_force_minimum() {
        let boxes = scatter();
        let grid = BoxGrid::new(boxes[..2000].to_vec());
        // The distance to a box's centre is never below the distance to the box.
        let centre = |b: &Bounds| b.min.midpoint(b.max);
        for &(x, y) in &[(0.0, 0.0), (700.0, 20.0), (-400.0, 900.0), (512.0, 300.5)] {
            let p = Point::new(x, y);
            let brute = boxes[..2000]
                .iter()
                .map(|b| centre(b).distance(p))
                .fold(f64::INFINITY, f64::min);
            let found = grid.nearest(p, |k| centre(&boxes[k]).distance(p));
            assert_eq!(found, brute, "at {p:?}");
        }
    }

    #[test]
    fn boxes_along_a_line_get_a_small_grid() {
        // Points 1 µm across strung over a kilometre: the median side would make a billion
        // cells; the span rule keeps them to a few per item.
        let boxes: Vec<Bounds> = (0..1000)
            .map(|k| square(1000.0 * k as f64, 5.0, 1e-6))
            .collect();
        let grid = BoxGrid::new(boxes.clone());
        assert!(grid.nx * grid.ny <= 3 * CELLS_PER_ITEM * boxes.len() + 1);
        let mut out = Vec::new();
        grid.near(Point::new(2000.0, 5.0), 1.0, &mut out);
        assert_eq!(out, vec![2]);
    }

    #[test]
    fn empty_and_degenerate_grids_answer() {
        let empty = BoxGrid::new(Vec::new());
        let mut out = vec![7];
        empty.near(Point::ORIGIN, 10.0, &mut out);
        assert!(out.is_empty());
        assert_eq!(empty.nearest(Point::ORIGIN, |_| 0.0), f64::INFINITY);
        // A point that is not a number still gets an answer (from every item).
        let one = BoxGrid::new(vec![square(0.0, 0.0, 1.0)]);
        assert_eq!(one.nearest(Point::new(f64::NAN, 0.0), |_| 2.5), 2.5);
        // Boxes that are single points, all in one place, and one that is not finite.
        let odd = BoxGrid::new(vec![
            Bounds::at(Point::new(3.0, 3.0)),
            Bounds::at(Point::new(3.0, 3.0)),
            Bounds::at(Point::new(f64::NAN, 0.0)),
        ]);
        odd.near(Point::new(3.0, 4.0), 1.0, &mut out);
        assert_eq!(out, vec![0, 1, 2]);
        odd.near(Point::new(30.0, 4.0), 1.0, &mut out);
        assert_eq!(out, vec![2]);
    }
}
