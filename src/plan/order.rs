//! The order of the inner cuts: nearest neighbour from the work zero, then 2-opt moves, both
//! through grids so that a sheet of thousands of cuts is ordered in about linear time.
//!
//! Nearest neighbour: each next cut is the one whose plunge point is nearest to where the last
//! cut ended (the first: nearest to the work zero); of equally near ones, the one first in the
//! input. This is exactly what comparing every remaining cut would choose: the grid only skips
//! cells that cannot hold a nearer point. Then [`two_opt`] shortens that tour, which ends at the
//! outline's plunge point when there is an outline (it is cut last).

use super::PlannedCut;
use crate::geom::Point;

/// Rebuild the grid with coarser cells when fewer points than this share of its cells remain
/// (so that the searches near the end do not walk through empty cells).
const SPARSE_SHARE: usize = 8;

/// Orders `cuts` by nearest neighbour (module docs), then shortens the tour, which ends at `end`
/// when given (the outline's plunge point: the outline is cut last), by 2-opt moves
/// ([`two_opt`]).
pub(super) fn order_cuts(cuts: Vec<PlannedCut>, end: Option<Point>) -> Vec<PlannedCut> {
    let points: Vec<Point> = cuts.iter().map(|c| c.plunge).collect();
    let starts: Vec<Point> = cuts.iter().map(|c| c.path.start_point()).collect();
    let mut order = nearest_first(&points, &starts);
    two_opt(&points, &mut order, end);
    let mut slots: Vec<Option<PlannedCut>> = cuts.into_iter().map(Some).collect();
    order.iter().filter_map(|&i| slots[i].take()).collect()
}

/// The nearest-neighbour order of the points: from the work zero, each next one nearest to
/// `starts` of the one before (where that cut's path begins and, closed, ends).
fn nearest_first(points: &[Point], starts: &[Point]) -> Vec<usize> {
    let mut grid = PointGrid::new(points, (0..points.len()).collect());
    let mut out = Vec::with_capacity(points.len());
    let mut here = Point::ORIGIN;
    while let Some(i) = grid.take_nearest(points, here) {
        here = starts[i];
        out.push(i);
        if grid.remaining * SPARSE_SHARE < grid.cells.len() && grid.remaining > 0 {
            let left: Vec<usize> = grid.cells.iter().flatten().copied().collect();
            grid = PointGrid::new(points, left);
        }
    }
    out
}

/// Each point's candidates for a 2-opt move: its nearest others.
const NEIGHBOURS: usize = 8;

/// A 2-opt move reverses at most this many cuts (longer reversals are left out, which keeps a
/// sweep about linear).
const MAX_REVERSAL: usize = 1000;

/// At most this many sweeps over the tour.
const MAX_SWEEPS: usize = 25;

/// Shortens the tour from the work zero through `points` in `order` (and on to `end`, fixed
/// last, when given) by 2-opt moves: two rapids `x_i → x_{i+1}` and `x_j → x_{j+1}` become
/// `x_i → x_j` and `x_{i+1} → x_{j+1}`, the cuts between reversed, whenever that is shorter by
/// more than [`MIN_GAIN`]. Candidates come from each point's [`NEIGHBOURS`] nearest (a move can
/// only gain if one new rapid is shorter than the one it replaces). The rapids are measured
/// between plunge points; a closed cut ends near where it starts. Never lengthens the tour.
fn two_opt(points: &[Point], order: &mut [usize], end: Option<Point>) {
    let n = order.len();
    if n < 2 {
        return;
    }
    // Node 0 is the work zero, fixed first; node k + 1 is point k; node n + 1 the end, fixed.
    let mut all = vec![Point::ORIGIN];
    all.extend_from_slice(points);
    all.extend(end);
    let near = neighbours(&all, NEIGHBOURS);
    let mut x: Vec<usize> = std::iter::once(0)
        .chain(order.iter().map(|&i| i + 1))
        .collect();
    if end.is_some() {
        x.push(n + 1);
    }
    let mut pos = vec![0usize; all.len()];
    for (k, &node) in x.iter().enumerate() {
        pos[node] = k;
    }
    let d = |a: usize, b: usize| all[a].distance(all[b]);
    for _ in 0..MAX_SWEEPS {
        let mut improved = false;
        for i in 0..x.len() - 1 {
            improved |= improve_after(&mut x, &mut pos, &near, &d, i, n);
        }
        if !improved {
            break;
        }
    }
    for (slot, &node) in order.iter_mut().zip(&x[1..=n]) {
        *slot = node - 1;
    }
}

/// One 2-opt move that removes the rapid `x[i] → x[i + 1]`, if one gains; whether it moved.
/// Positions 1 to `last` (the cuts) may move; the work zero before them and the end after do
/// not.
fn improve_after(
    x: &mut [usize],
    pos: &mut [usize],
    near: &[Vec<usize>],
    d: &dyn Fn(usize, usize) -> f64,
    i: usize,
    last: usize,
) -> bool {
    let (a, b) = (x[i], x[i + 1]);
    let ab = d(a, b);
    // A new rapid a → c (c after b): remove c → x[j+1], add b → x[j+1].
    for &c in &near[a] {
        let ac = d(a, c);
        if ac >= ab {
            break;
        }
        let j = pos[c];
        if j <= i + 1 || j > last || j - i > MAX_REVERSAL {
            continue;
        }
        let (old, new) = match x.get(j + 1) {
            Some(&e) => (ab + d(c, e), ac + d(b, e)),
            None => (ab, ac),
        };
        if old - new > MIN_GAIN {
            reverse(x, pos, i + 1, j);
            return true;
        }
    }
    // A new rapid c → b (c before a, after x[k−1]): remove x[k−1] → c, add x[k−1] → a.
    for &c in &near[b] {
        let bc = d(b, c);
        if bc >= ab {
            break;
        }
        let k = pos[c];
        if k == 0 || k > i || i > last || i + 1 - k > MAX_REVERSAL {
            continue;
        }
        let e = x[k - 1];
        if (d(e, c) + ab) - (d(e, a) + bc) > MIN_GAIN {
            reverse(x, pos, k, i);
            return true;
        }
    }
    false
}

/// Reverses `x[from..=to]`, keeping `pos` (each node's place in `x`) true.
fn reverse(x: &mut [usize], pos: &mut [usize], from: usize, to: usize) {
    x[from..=to].reverse();
    for k in from..=to {
        pos[x[k]] = k;
    }
}

/// A 2-opt move is taken only when it shortens the tour by more than this (mm), so that rounding
/// cannot make moves go round in circles.
const MIN_GAIN: f64 = 1e-9;

/// Each point's `k` nearest other points, nearest first (ties: lower index), by a grid.
fn neighbours(points: &[Point], k: usize) -> Vec<Vec<usize>> {
    let grid = PointGrid::new(points, (0..points.len()).collect());
    (0..points.len())
        .map(|i| grid.k_nearest(points, i, k))
        .collect()
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

    /// The `k` points nearest to point `i` other than itself, nearest first (ties: the lower
    /// index): rings of cells outwards until no unsearched cell can hold a nearer one.
    fn k_nearest(&self, points: &[Point], i: usize, k: usize) -> Vec<usize> {
        if k == 0 {
            return Vec::new();
        }
        let q = points[i];
        let (cx, cy) = self.cell_of(q);
        let mut found: Vec<(f64, usize)> = Vec::new();
        for ring in 0.. {
            let r = ring as i64;
            let (x0, x1, y0, y1) = (cx as i64 - r, cx as i64 + r, cy as i64 - r, cy as i64 + r);
            let mut visit = |x: i64, y: i64| {
                if x < 0 || y < 0 || x >= self.nx as i64 || y >= self.ny as i64 {
                    return;
                }
                for &j in &self.cells[y as usize * self.nx + x as usize] {
                    if j != i {
                        found.push((points[j].distance(q), j));
                    }
                }
            };
            if ring == 0 {
                visit(x0, y0);
            } else {
                for x in x0..=x1 {
                    visit(x, y0);
                    visit(x, y1);
                }
                for y in y0 + 1..y1 {
                    visit(x0, y);
                    visit(x1, y);
                }
            }
            found.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            found.truncate(k);
            let covers = x0 <= 0 && y0 <= 0 && x1 + 1 >= self.nx as i64 && y1 + 1 >= self.ny as i64;
            // Unsearched cells lie at least `ring` whole cells from q's cell.
            let reach = ring as f64 * self.cell;
            if covers || (found.len() == k && found[k - 1].0 < reach) {
                break;
            }
        }
        found.into_iter().map(|(_, j)| j).collect()
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
        nearest_first(points, start)
    }

    /// The length of the open tour from the work zero through `points` in `order`.
    fn tour(points: &[Point], order: &[usize]) -> f64 {
        let mut here = Point::ORIGIN;
        let mut total = 0.0;
        for &i in order {
            total += here.distance(points[i]);
            here = points[i];
        }
        total
    }

    fn random_points(n: usize, seed: u64, w: f64, h: f64) -> Vec<Point> {
        let mut random = crate::geom::random::XorShift::new(seed);
        (0..n)
            .map(|_| Point::new(w * random.next_f64(), h * random.next_f64()))
            .collect()
    }

    #[test]
    fn two_opt_never_lengthens_and_shortens_a_scattered_sheet() {
        let points = random_points(3000, 5, 2000.0, 1000.0);
        let nn = nearest_first(&points, &points);
        let mut better = nn.clone();
        two_opt(&points, &mut better, None);
        let mut sorted = better.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..3000).collect::<Vec<_>>(), "every cut once");
        let (before, after) = (tour(&points, &nn), tour(&points, &better));
        // Nearest neighbour runs about 25 % above the optimum on random points and 2-opt about
        // 5 % (docs/sources.md P4.4, from memory); ask for a clear gain only.
        assert!(after < 0.95 * before, "{before} → {after}");
    }

    #[test]
    fn two_opt_is_never_worse_than_nearest_neighbour_and_never_beats_the_optimum() {
        // Small sets against every order (7! = 5040 tours).
        fn permutations(items: &mut Vec<usize>, k: usize, best: &mut f64, points: &[Point]) {
            if k == items.len() {
                *best = best.min(tour(points, items));
                return;
            }
            for i in k..items.len() {
                items.swap(k, i);
                permutations(items, k + 1, best, points);
                items.swap(k, i);
            }
        }
        for seed in 1..40 {
            let points = random_points(7, seed, 100.0, 60.0);
            let nn = nearest_first(&points, &points);
            let mut better = nn.clone();
            two_opt(&points, &mut better, None);
            let mut optimum = f64::INFINITY;
            permutations(&mut (0..7).collect(), 0, &mut optimum, &points);
            let (n, b) = (tour(&points, &nn), tour(&points, &better));
            assert!(
                b <= n + 1e-9 && b >= optimum - 1e-9,
                "seed {seed}: {optimum} ≤ {b} ≤ {n}"
            );
        }
    }

    #[test]
    fn k_nearest_agrees_with_sorting_every_distance() {
        let points = random_points(500, 9, 300.0, 300.0);
        let grid = PointGrid::new(&points, (0..points.len()).collect());
        for i in (0..500).step_by(37) {
            let mut brute: Vec<(f64, usize)> = (0..500)
                .filter(|&j| j != i)
                .map(|j| (points[j].distance(points[i]), j))
                .collect();
            brute.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            let want: Vec<usize> = brute.iter().take(8).map(|p| p.1).collect();
            assert_eq!(grid.k_nearest(&points, i, 8), want);
        }
    }

    #[test]
    fn the_grid_gives_the_order_of_comparing_every_cut() {
        let mut random = crate::geom::random::XorShift::from_state(0x9E37_79B9_7F4A_7C15_u64);
        let mut next = || random.next_f64();
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
