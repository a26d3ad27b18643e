//! The order of the inner cuts: nearest neighbour from the work zero, found through a grid so
//! that a sheet of thousands of cuts is ordered in about linear time.
//!
//! Each next cut is the one whose plunge point is nearest to where the last cut ended (the first:
//! nearest to the work zero); of equally near ones, the one first in the input. This is exactly
//! what comparing every remaining cut would choose: the grid only skips cells that cannot hold a
//! nearer point.

use super::PlannedCut;
use crate::geom::Point;

/// Rebuild the grid with coarser cells when fewer points than this share of its cells remain
/// (so that the searches near the end do not walk through empty cells).
const SPARSE_SHARE: usize = 8;

/// Orders `cuts` by nearest neighbour (module docs).
pub(super) fn order_nearest_first(cuts: Vec<PlannedCut>) -> Vec<PlannedCut> {
    let points: Vec<Point> = cuts.iter().map(|c| c.plunge).collect();
    let mut grid = PointGrid::new(&points, (0..points.len()).collect());
    let mut slots: Vec<Option<PlannedCut>> = cuts.into_iter().map(Some).collect();
    let mut out = Vec::with_capacity(slots.len());
    let mut here = Point::ORIGIN;
    while let Some(i) = grid.take_nearest(&points, here) {
        let Some(c) = slots[i].take() else {
            break;
        };
        here = c.path.start_point();
        out.push(c);
        if grid.remaining * SPARSE_SHARE < grid.cells.len() && grid.remaining > 0 {
            let left: Vec<usize> = grid.cells.iter().flatten().copied().collect();
            grid = PointGrid::new(&points, left);
        }
    }
    out
}

/// The points not yet taken, by square cell; each cell's list in increasing index.
struct PointGrid {
    origin: Point,
    cell: f64,
    nx: usize,
    ny: usize,
    cells: Vec<Vec<usize>>,
    remaining: usize,
}

impl PointGrid {
    /// A grid of about one point per cell over the points `which` of `points`.
    fn new(points: &[Point], mut which: Vec<usize>) -> PointGrid {
        which.sort_unstable();
        let finite = |p: &Point| p.x.is_finite() && p.y.is_finite();
        let mut lo = Point::new(f64::INFINITY, f64::INFINITY);
        let mut hi = Point::new(f64::NEG_INFINITY, f64::NEG_INFINITY);
        for p in which.iter().map(|&i| points[i]).filter(finite) {
            lo = Point::new(lo.x.min(p.x), lo.y.min(p.y));
            hi = Point::new(hi.x.max(p.x), hi.y.max(p.y));
        }
        let n = which.len().max(1) as f64;
        let span = (hi.x - lo.x).max(hi.y - lo.y);
        let area = (hi.x - lo.x) * (hi.y - lo.y);
        let mut cell = (area / n).sqrt().max(span / n);
        if !(cell > 0.0 && cell.is_finite()) {
            cell = 1.0;
        }
        if !(lo.x.is_finite() && lo.y.is_finite()) {
            lo = Point::ORIGIN;
            hi = Point::ORIGIN;
        }
        let nx = (((hi.x - lo.x) / cell).floor() as usize + 1).clamp(1, 1 << 16);
        let ny = (((hi.y - lo.y) / cell).floor() as usize + 1).clamp(1, 1 << 16);
        let mut grid = PointGrid {
            origin: lo,
            cell,
            nx,
            ny,
            cells: vec![Vec::new(); nx * ny],
            remaining: which.len(),
        };
        for i in which {
            let (cx, cy) = grid.cell_of(points[i]);
            grid.cells[cy * nx + cx].push(i);
        }
        grid
    }

    /// The cell holding `p`, clamped to the grid (a point that is not finite goes to cell 0).
    fn cell_of(&self, p: Point) -> (usize, usize) {
        let clamp = |v: f64, o: f64, n: usize| {
            let c = ((v - o) / self.cell).floor();
            if c.is_nan() || c < 0.0 {
                0
            } else {
                (c as usize).min(n - 1)
            }
        };
        (
            clamp(p.x, self.origin.x, self.nx),
            clamp(p.y, self.origin.y, self.ny),
        )
    }

    /// Takes out and returns the remaining point nearest to `q` (ties: the lowest index).
    /// Rings of cells are searched outwards from `q`'s cell until no unsearched cell can hold a
    /// point as near as the best found.
    fn take_nearest(&mut self, points: &[Point], q: Point) -> Option<usize> {
        if self.remaining == 0 {
            return None;
        }
        let (cx, cy) = self.cell_of(q);
        let mut best: Option<(f64, usize)> = None;
        for ring in 0.. {
            self.search_ring(points, q, (cx, cy), ring, &mut best);
            let (x0, x1) = (cx.saturating_sub(ring), cx + ring);
            let (y0, y1) = (cy.saturating_sub(ring), cy + ring);
            let covers = x0 == 0 && y0 == 0 && x1 + 1 >= self.nx && y1 + 1 >= self.ny;
            // Every cell outside the searched square lies at least this far from q.
            let sq_lo_x = self.origin.x + x0 as f64 * self.cell;
            let sq_hi_x = self.origin.x + (x1 + 1) as f64 * self.cell;
            let sq_lo_y = self.origin.y + y0 as f64 * self.cell;
            let sq_hi_y = self.origin.y + (y1 + 1) as f64 * self.cell;
            let inner = [
                if x0 == 0 {
                    f64::INFINITY
                } else {
                    q.x - sq_lo_x
                },
                if x1 + 1 >= self.nx {
                    f64::INFINITY
                } else {
                    sq_hi_x - q.x
                },
                if y0 == 0 {
                    f64::INFINITY
                } else {
                    q.y - sq_lo_y
                },
                if y1 + 1 >= self.ny {
                    f64::INFINITY
                } else {
                    sq_hi_y - q.y
                },
            ]
            .into_iter()
            .fold(f64::INFINITY, f64::min);
            let done = covers || best.is_some_and(|(d, _)| d < inner);
            if done {
                break;
            }
        }
        let (_, i) = best?;
        let (px, py) = self.cell_of(points[i]);
        let list = &mut self.cells[py * self.nx + px];
        if let Ok(k) = list.binary_search(&i) {
            list.remove(k);
        }
        self.remaining -= 1;
        Some(i)
    }

    /// Looks at the cells at Chebyshev distance `ring` from `c`, keeping the nearest point.
    fn search_ring(
        &self,
        points: &[Point],
        q: Point,
        c: (usize, usize),
        ring: usize,
        best: &mut Option<(f64, usize)>,
    ) {
        let (cx, cy) = (c.0 as i64, c.1 as i64);
        let r = ring as i64;
        let mut visit = |x: i64, y: i64| {
            if x < 0 || y < 0 || x >= self.nx as i64 || y >= self.ny as i64 {
                return;
            }
            for &i in &self.cells[y as usize * self.nx + x as usize] {
                let d = points[i].distance(q);
                let better = match *best {
                    None => true,
                    Some((bd, bi)) => d < bd || (d == bd && i < bi) || bd.is_nan(),
                };
                if better {
                    *best = Some((d, i));
                }
            }
        };
        if r == 0 {
            visit(cx, cy);
            return;
        }
        for x in cx - r..=cx + r {
            visit(x, cy - r);
            visit(x, cy + r);
        }
        for y in cy - r + 1..=cy + r - 1 {
            visit(cx - r, y);
            visit(cx + r, y);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The order comparing every remaining point, as the planner did before the grid.
    fn brute_order(points: &[Point], start: &[Point]) -> Vec<usize> {
        let mut left: Vec<usize> = (0..points.len()).collect();
        let mut here = Point::ORIGIN;
        let mut out = Vec::new();
        while !left.is_empty() {
            let (k, _) = left
                .iter()
                .enumerate()
                .map(|(k, &i)| (k, points[i].distance(here)))
                .min_by(|a, b| a.1.total_cmp(&b.1))
                .unwrap();
            let i = left.remove(k);
            here = start[i];
            out.push(i);
        }
        out
    }

    fn grid_order(points: &[Point], start: &[Point]) -> Vec<usize> {
        let mut grid = PointGrid::new(points, (0..points.len()).collect());
        let mut here = Point::ORIGIN;
        let mut out = Vec::new();
        while let Some(i) = grid.take_nearest(points, here) {
            here = start[i];
            out.push(i);
            if grid.remaining * SPARSE_SHARE < grid.cells.len() && grid.remaining > 0 {
                let left: Vec<usize> = grid.cells.iter().flatten().copied().collect();
                grid = PointGrid::new(points, left);
            }
        }
        out
    }

    #[test]
    fn the_grid_gives_the_order_of_comparing_every_cut() {
        let mut state = 0x9E37_79B9_7F4A_7C15_u64;
        let mut next = || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        // Scattered, clustered in one corner, on a lattice (many equal distances), and with the
        // path starts a little off the plunge points as for real cuts.
        let scattered: Vec<Point> = (0..700)
            .map(|_| Point::new(900.0 * next(), 400.0 * next()))
            .collect();
        let clustered: Vec<Point> = (0..400)
            .map(|k| {
                let far = k % 50 == 0;
                let s = if far { 3000.0 } else { 30.0 };
                Point::new(s * next() + 5.0, s * next() - 7.0)
            })
            .collect();
        let lattice: Vec<Point> = (0..400)
            .map(|k| Point::new(10.0 * (k % 20) as f64, 10.0 * (k / 20) as f64))
            .collect();
        for points in [scattered, clustered, lattice] {
            let start: Vec<Point> = points
                .iter()
                .map(|p| Point::new(p.x + 3.0, p.y - 1.0))
                .collect();
            assert_eq!(grid_order(&points, &start), brute_order(&points, &start));
            assert_eq!(grid_order(&points, &points), brute_order(&points, &points));
        }
    }
}
