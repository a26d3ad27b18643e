//! How far the program travels at rapid, measured on the program read back, beside a bound no
//! cut order can beat.
//!
//! The bound: any order visits the work zero and every cut's pierce point, so its rapids, were
//! each cut to end where it was pierced, would be a path through those points, and no path
//! through points is shorter than their minimum spanning tree (Euclidean, found through the
//! Delaunay triangulation, which holds every edge of that tree: docs/sources.md P4.4). A cut
//! ends elsewhere (after its overcut and lead-out), so the rapid that leaves it may be shorter
//! than the tree's idea by as much as its exit lies from its pierce point (the triangle
//! inequality); the bound subtracts
//! that for every cut.

use super::Trace;
use serde::Serialize;

/// The program's rapid travel and the bound (mm, in the XY plane).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Rapids {
    /// The XY length of every rapid move of the program.
    pub length: f64,
    /// The minimum spanning tree of the work zero and the cuts' pierce points.
    pub pierce_tree: f64,
    /// `pierce_tree` less each cut's distance from its pierce point to where it ends: no order
    /// of these cuts has shorter rapids (0 at least).
    pub lower_bound: f64,
}

/// The rapids of the program read back as `trace` (cuts found by their index comments).
pub fn rapids(trace: &Trace) -> Rapids {
    let length = trace
        .moves
        .iter()
        .filter(|m| m.rapid)
        .map(|m| (m.to[0] - m.from[0]).hypot(m.to[1] - m.from[1]))
        .sum();
    let mut points = vec![[0.0, 0.0]];
    let mut exits = 0.0;
    for k in 0..trace.features.len() {
        let range = super::range_at(trace, k);
        let feeds: Vec<_> = trace.moves[range].iter().filter(|m| !m.rapid).collect();
        if let (Some(first), Some(last)) = (feeds.first(), feeds.last()) {
            let pierce = [first.from[0], first.from[1]];
            exits += (last.to[0] - pierce[0]).hypot(last.to[1] - pierce[1]);
            points.push(pierce);
        }
    }
    let pierce_tree = spanning_tree_length(&points);
    Rapids {
        length,
        pierce_tree,
        lower_bound: (pierce_tree - exits).max(0.0),
    }
}

/// The length of the Euclidean minimum spanning tree of `points`: Kruskal's algorithm on the
/// edges of their Delaunay triangulation (all points on one line: the sorted neighbours).
/// Points that the triangulation leaves out as near-duplicates (closer than about 1e-16 of
/// their size) add nothing.
pub fn spanning_tree_length(points: &[[f64; 2]]) -> f64 {
    if points.len() < 2 {
        return 0.0;
    }
    let input: Vec<delaunator::Point> = points
        .iter()
        .map(|p| delaunator::Point { x: p[0], y: p[1] })
        .collect();
    let t = delaunator::triangulate(&input);
    let mut edges: Vec<(f64, usize, usize)> = Vec::with_capacity(t.triangles.len() + 2);
    let dist =
        |a: usize, b: usize| (points[a][0] - points[b][0]).hypot(points[a][1] - points[b][1]);
    for e in 0..t.triangles.len() {
        let twin = t.halfedges[e];
        // Each inner edge once (from its lower half-edge), each hull edge once.
        if twin == delaunator::EMPTY || e < twin {
            let (a, b) = (t.triangles[e], t.triangles[delaunator::next_halfedge(e)]);
            edges.push((dist(a, b), a, b));
        }
    }
    if t.triangles.is_empty() {
        // Collinear: the hull lists the points in order along their line.
        for w in t.hull.windows(2) {
            edges.push((dist(w[0], w[1]), w[0], w[1]));
        }
    }
    edges.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut parent: Vec<usize> = (0..points.len()).collect();
    fn root(parent: &mut [usize], mut k: usize) -> usize {
        while parent[k] != k {
            parent[k] = parent[parent[k]];
            k = parent[k];
        }
        k
    }
    let mut total = 0.0;
    for (d, a, b) in edges {
        let (ra, rb) = (root(&mut parent, a), root(&mut parent, b));
        if ra != rb {
            parent[ra] = rb;
            total += d;
        }
    }
    total
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Prim's algorithm comparing every pair: the reference for small sets.
    fn prim(points: &[[f64; 2]]) -> f64 {
        let n = points.len();
        let d =
            |a: usize, b: usize| (points[a][0] - points[b][0]).hypot(points[a][1] - points[b][1]);
        let mut best = vec![f64::INFINITY; n];
        let mut done = vec![false; n];
        best[0] = 0.0;
        let mut total = 0.0;
        for _ in 0..n {
            let u = (0..n)
                .filter(|&k| !done[k])
                .min_by(|&a, &b| best[a].total_cmp(&best[b]))
                .unwrap();
            done[u] = true;
            total += best[u];
            for v in 0..n {
                if !done[v] {
                    best[v] = best[v].min(d(u, v));
                }
            }
        }
        total
    }

    #[test]
    fn the_tree_agrees_with_prims_algorithm() {
        // The Delaunay triangulation holds every edge of the Euclidean minimum spanning tree
        // (docs/sources.md P4.4): Kruskal on its edges must match Prim's on every pair.
        let mut random = crate::geom::random::XorShift::from_state(0x2545_f491_4f6c_dd1d_u64);
        let mut next = || random.next_f64();
        for n in [2, 3, 10, 200, 700] {
            let points: Vec<[f64; 2]> = (0..n).map(|_| [500.0 * next(), 300.0 * next()]).collect();
            let (fast, slow) = (spanning_tree_length(&points), prim(&points));
            assert!(
                (fast - slow).abs() < 1e-9 * slow.max(1.0),
                "{n}: {fast} vs {slow}"
            );
        }
        // A lattice (many equal edges, cocircular points) and points on one line.
        let lattice: Vec<[f64; 2]> = (0..100)
            .map(|k| [10.0 * (k % 10) as f64, 10.0 * (k / 10) as f64])
            .collect();
        assert!((spanning_tree_length(&lattice) - 990.0).abs() < 1e-9);
        let line: Vec<[f64; 2]> = [3.0, 0.0, 7.5, 1.0, 12.0]
            .iter()
            .map(|&x| [x, 2.0 * x])
            .collect();
        assert!((spanning_tree_length(&line) - 12.0 * 5f64.sqrt()).abs() < 1e-9);
    }
}
