//! Feed moves as a controller runs them: straight lines and circular arcs.

use super::{Point, Vec2};
use serde::Serialize;
use std::f64::consts::TAU;

/// One feed move, from wherever the previous move ended.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Move {
    /// A straight move (G1).
    Line { to: Point },
    /// A circular arc (G2 clockwise, G3 counter-clockwise, seen from +Z) about `center`, ending
    /// at `to`. Its radius is the distance from `center` to the start; the end lies on the same
    /// circle (to rounding). A sweep of a full turn is never used: split it first.
    Arc {
        to: Point,
        #[serde(rename = "center")]
        centre: Point,
        ccw: bool,
    },
}

impl Move {
    pub fn end(&self) -> Point {
        match *self {
            Move::Line { to } | Move::Arc { to, .. } => to,
        }
    }

    /// The signed sweep of an arc started at `from` (positive counter-clockwise), in
    /// (−2π, 2π); 0 for a line.
    pub fn sweep(&self, from: Point) -> f64 {
        match *self {
            Move::Line { .. } => 0.0,
            Move::Arc { to, centre, ccw } => {
                let a0 = (from - centre).angle();
                let a1 = (to - centre).angle();
                if ccw {
                    (a1 - a0).rem_euclid(TAU)
                } else {
                    -(a0 - a1).rem_euclid(TAU)
                }
            }
        }
    }

    /// The point at fraction `t` of the move started at `from` (0 at `from`, 1 at the end).
    /// Along an arc the radius is interpolated between start and end radius, so a slightly
    /// unequal pair (after rounding) still gives a continuous curve.
    pub fn point_at(&self, from: Point, t: f64) -> Point {
        match *self {
            Move::Line { to } => from.lerp(to, t),
            Move::Arc { to, centre, .. } => {
                let r0 = from.distance(centre);
                let r1 = to.distance(centre);
                let a0 = (from - centre).angle();
                let sweep = self.sweep(from);
                centre + Vec2::from_angle(a0 + t * sweep) * (r0 + t * (r1 - r0))
            }
        }
    }

    /// Length of the move started at `from`.
    pub fn length(&self, from: Point) -> f64 {
        match *self {
            Move::Line { to } => from.distance(to),
            Move::Arc { centre, .. } => from.distance(centre) * self.sweep(from).abs(),
        }
    }

    /// The unit tangent at the start of the move started at `from`, in the direction of travel.
    pub fn start_tangent(&self, from: Point) -> Option<Vec2> {
        match *self {
            Move::Line { to } => (to - from).normalized(),
            Move::Arc { centre, ccw, .. } => {
                let r = (from - centre).normalized()?.perp();
                Some(if ccw { r } else { -r })
            }
        }
    }

    /// The unit tangent at the end of the move started at `from`.
    pub fn end_tangent(&self, from: Point) -> Option<Vec2> {
        match *self {
            Move::Line { to } => (to - from).normalized(),
            Move::Arc { to, centre, ccw } => {
                let r = (to - centre).normalized()?.perp();
                Some(if ccw { r } else { -r })
            }
        }
    }
}

/// Points along a run of moves from `start`: every move's end, and `per_arc` points inside each
/// arc. For drawing and measuring, never for output.
pub fn sample(start: Point, moves: &[Move], per_arc: usize) -> Vec<Point> {
    let mut out = vec![start];
    let mut from = start;
    for m in moves {
        if let Move::Arc { .. } = m {
            for k in 1..per_arc.max(1) {
                out.push(m.point_at(from, k as f64 / per_arc as f64));
            }
        }
        out.push(m.end());
        from = m.end();
    }
    out
}

/// The same run travelled the other way: it starts where `moves` end and ends at `start`, each
/// arc about the same centre in the opposite sense.
pub fn reversed(start: Point, moves: &[Move]) -> (Point, Vec<Move>) {
    let mut ends: Vec<Point> = std::iter::once(start)
        .chain(moves.iter().map(Move::end))
        .collect();
    let first = ends.pop().unwrap_or(start);
    let out = moves
        .iter()
        .rev()
        .zip(ends.iter().rev())
        .map(|(m, &to)| match *m {
            Move::Line { .. } => Move::Line { to },
            Move::Arc { centre, ccw, .. } => Move::Arc {
                to,
                centre,
                ccw: !ccw,
            },
        })
        .collect();
    (first, out)
}

/// Total length of a run of moves from `start`.
pub fn total_length(start: Point, moves: &[Move]) -> f64 {
    let mut from = start;
    let mut sum = 0.0;
    for m in moves {
        sum += m.length(from);
        from = m.end();
    }
    sum
}

/// The move `m` (started at `from`) cut short at fraction `t` of its length: it ends at
/// `m.point_at(from, t)`, or at `m`'s own end for `t ≥ 1`. A move's start is wherever the
/// previous one ended, so the same function gives the remainder of a move cut earlier.
fn ending_at(m: &Move, from: Point, t: f64) -> Move {
    let to = if t >= 1.0 {
        m.end()
    } else {
        m.point_at(from, t)
    };
    match *m {
        Move::Line { .. } => Move::Line { to },
        Move::Arc { centre, ccw, .. } => Move::Arc { to, centre, ccw },
    }
}

/// The run of moves from `start` cut at the distances `at` along it (mm; values outside the run
/// or not finite are ignored): the pieces between consecutive cuts, in order, each a run that
/// starts where the one before ends. With no cuts, one piece: the whole run.
pub fn split_at(start: Point, moves: &[Move], at: &[f64]) -> Vec<Vec<Move>> {
    let mut cuts: Vec<f64> = at.iter().copied().filter(|d| d.is_finite()).collect();
    cuts.sort_by(f64::total_cmp);
    let mut pieces: Vec<Vec<Move>> = vec![Vec::new()];
    let mut next = cuts.into_iter().peekable();
    let mut from = start;
    let mut walked = 0.0;
    for m in moves {
        let len = m.length(from);
        while let Some(&d) = next.peek() {
            if d <= walked {
                next.next();
                continue;
            }
            if d >= walked + len {
                break;
            }
            let current = pieces.len() - 1;
            pieces[current].push(ending_at(m, from, (d - walked) / len));
            pieces.push(Vec::new());
            next.next();
        }
        let current = pieces.len() - 1;
        pieces[current].push(ending_at(m, from, 1.0));
        walked += len;
        from = m.end();
    }
    pieces
}

/// The first `length` (mm) of the run of moves from `start`, the last move cut short; empty for
/// a length of zero or less, the whole run for one longer than it.
pub fn leading_stretch(start: Point, moves: &[Move], length: f64) -> Vec<Move> {
    if length.is_nan() || length <= 0.0 {
        return Vec::new();
    }
    split_at(start, moves, &[length])
        .into_iter()
        .next()
        .unwrap_or_default()
}

/// How close (mm) the end of a run must come to its start for the run to count as closed in
/// [`largest_kink_deg`]: closed runs end exactly where they start, so this only absorbs rounding.
pub const CLOSED_RUN_GAP: f64 = 1e-9;

/// The largest change of direction between consecutive moves, in degrees (0 for a run that is
/// tangent-continuous). A closed run (one of two moves or more ending within [`CLOSED_RUN_GAP`]
/// of its start) also counts its closing joint: the last move's end tangent against the first
/// move's start tangent.
pub fn largest_kink_deg(start: Point, moves: &[Move]) -> f64 {
    let turn = |t0: Vec2, t1: Vec2| t0.cross(t1).atan2(t0.dot(t1)).abs();
    let mut from = start;
    let mut worst: f64 = 0.0;
    let mut previous: Option<Vec2> = None;
    for m in moves {
        if let (Some(t0), Some(t1)) = (previous, m.start_tangent(from)) {
            worst = worst.max(turn(t0, t1));
        }
        previous = m.end_tangent(from);
        from = m.end();
    }
    let closed = moves.len() >= 2 && from.distance(start) <= CLOSED_RUN_GAP;
    if closed
        && let (Some(t0), Some(t1)) = (previous, moves.first().and_then(|m| m.start_tangent(start)))
    {
        worst = worst.max(turn(t0, t1));
    }
    worst.to_degrees()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quarter_arcs_both_ways() {
        let from = Point::new(1.0, 0.0);
        let ccw = Move::Arc {
            to: Point::new(0.0, 1.0),
            centre: Point::ORIGIN,
            ccw: true,
        };
        assert!((ccw.sweep(from) - std::f64::consts::FRAC_PI_2).abs() < 1e-15);
        assert!((ccw.length(from) - std::f64::consts::FRAC_PI_2).abs() < 1e-15);
        let mid = ccw.point_at(from, 0.5);
        assert!((mid.x - mid.y).abs() < 1e-15 && mid.x > 0.0);
        let cw = Move::Arc {
            to: Point::new(0.0, 1.0),
            centre: Point::ORIGIN,
            ccw: false,
        };
        assert!((cw.sweep(from) + 3.0 * std::f64::consts::FRAC_PI_2).abs() < 1e-15);
        assert!(cw.point_at(from, 0.5).x < 0.0);
    }

    #[test]
    fn kinks_between_moves() {
        let start = Point::ORIGIN;
        let moves = [
            Move::Line {
                to: Point::new(1.0, 0.0),
            },
            Move::Line {
                to: Point::new(1.0, 1.0),
            },
        ];
        assert!((largest_kink_deg(start, &moves) - 90.0).abs() < 1e-12);
        // A closed run counts its closing joint. A line along +x, a three-quarter turn about
        // (1, 1) and a line down to the start are tangent-continuous inside, but arrive heading
        // −y where the run left heading +x: 90° at the start. Open (without the last line), no
        // kink.
        let teardrop = [
            Move::Line {
                to: Point::new(1.0, 0.0),
            },
            Move::Arc {
                to: Point::new(0.0, 1.0),
                centre: Point::new(1.0, 1.0),
                ccw: true,
            },
            Move::Line { to: start },
        ];
        assert!(largest_kink_deg(start, &teardrop[..2]) < 1e-12);
        assert!((largest_kink_deg(start, &teardrop) - 90.0).abs() < 1e-12);
        // A circle in two half turns closes without a kink.
        let circle = [
            Move::Arc {
                to: Point::new(2.0, 0.0),
                centre: Point::new(1.0, 0.0),
                ccw: true,
            },
            Move::Arc {
                to: start,
                centre: Point::new(1.0, 0.0),
                ccw: true,
            },
        ];
        assert!(largest_kink_deg(start, &circle) < 1e-12);
        // A line into a tangent arc has no kink.
        let moves = [
            Move::Line {
                to: Point::new(1.0, 0.0),
            },
            Move::Arc {
                to: Point::new(2.0, 1.0),
                centre: Point::new(1.0, 1.0),
                ccw: true,
            },
        ];
        assert!(largest_kink_deg(start, &moves) < 1e-12);
    }

    #[test]
    fn reversed_runs_back_through_the_same_points() {
        // A line, then a counter-clockwise quarter arc about (1, 1): reversed, the arc runs
        // clockwise from (2, 1) to (1, 0), then the line back to the origin.
        let start = Point::ORIGIN;
        let moves = [
            Move::Line {
                to: Point::new(1.0, 0.0),
            },
            Move::Arc {
                to: Point::new(2.0, 1.0),
                centre: Point::new(1.0, 1.0),
                ccw: true,
            },
        ];
        let (back_start, back) = reversed(start, &moves);
        assert_eq!(back_start, Point::new(2.0, 1.0));
        assert_eq!(
            back,
            vec![
                Move::Arc {
                    to: Point::new(1.0, 0.0),
                    centre: Point::new(1.0, 1.0),
                    ccw: false,
                },
                Move::Line { to: start },
            ]
        );
        assert!((back[0].sweep(back_start) + std::f64::consts::FRAC_PI_2).abs() < 1e-15);
        assert!((total_length(back_start, &back) - total_length(start, &moves)).abs() < 1e-15);
    }
}
