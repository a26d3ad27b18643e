//! Circular arcs as RS274/NGC centre-format words (`G2`/`G3 X Y I J`), within the radius rule.
//!
//! # The rule
//!
//! NISTIR 6556 §3.5.3.2: `I` and `J` are the centre's offsets from the arc's start (incremental
//! in G90 too, §3.5.17), and the start-to-centre and end-to-centre distances, as the controller
//! reads them, may differ by at most 0.002 mm (G21) or 0.0002 in (G20). The radius form `R`
//! (§3.5.3.1) is never written.
//!
//! # How an arc is written
//!
//! All values are in the program's units. For each arc:
//!
//! 1. Arcs of half a turn or more are split at their middle into two (practice,
//!    docs/sources.md P1.2), so every written arc turns less than 180°.
//! 2. The end point is rounded to the profile's decimals; the start is where the previous move
//!    ended *as written*.
//! 3. The exact centre is projected onto the perpendicular bisector of the two *rounded* end
//!    points (docs/sources.md P1.6), which makes both radii equal before `I`, `J` are
//!    rounded; rounding `I`, `J` then moves the centre by at most √2/2 of the last decimal, which
//!    changes the difference of the radii by at most √2 of the last decimal to first order (more on
//!    arcs of a few hundred steps radius or less, hence the check that follows).
//! 4. The written numbers are parsed back and the radius difference is measured; it must stay
//!    within [`RADIUS_MARGIN`] of the rule, and the written centre must lie on the side of the
//!    chord that gives the same direction and a turn under 180°. The four roundings of `I`, `J`
//!    (down or up each) are tried, nearest first.
//! 5. If no rounding passes: an arc whose sagitta is within half the last decimal is written as a
//!    straight move; a longer one is split in two (up to [`MAX_SPLITS`] times); past that the arc
//!    is refused.
//!
//! # Deviation from the exact arc
//!
//! Steps 2 and 3 move the end points by at most √2/2 of the last decimal each, and keep the
//! radius of the arc through them within a few times that of the exact radius; step 3's rounding
//! moves the centre by at most √2/2 of the last decimal. `tests/post_arcs.rs` measures the
//! distance of the written arc from the exact one over thousands of random arcs.

use super::number::format_number;
use crate::geom::Move;
use crate::geom::{Point, Vec2};
use std::f64::consts::{FRAC_PI_2, PI, TAU};

/// The share of the radius rule a written arc may use. The rest is margin for the controller's
/// own arithmetic: the check is made on the written decimals, read back exactly.
pub const RADIUS_MARGIN: f64 = 0.75;

/// How many times an arc may be halved when its rounded form breaks the radius rule.
pub const MAX_SPLITS: u32 = 4;

/// Arcs turning at least this much are split (180° less a rounding allowance, so that a
/// semicircle computed in floating point is split too).
const SPLIT_SWEEP: f64 = PI - 1e-9;

/// One written feed move: its words and where it ends as written.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Piece {
    /// `G1 X Y`.
    Line { x: String, y: String, end: Point },
    /// `G2` (clockwise) or `G3` (counter-clockwise) `X Y I J`.
    Arc {
        x: String,
        y: String,
        i: String,
        j: String,
        ccw: bool,
        end: Point,
    },
}

/// An arc that could not be written within the radius rule: the smallest radius difference
/// found, in the program's units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct RuleBroken {
    pub mismatch: f64,
}

/// A value as written with `decimals`, and the number the controller reads from it.
fn written(value: f64, decimals: usize) -> (String, f64) {
    let text = format_number(value, decimals);
    let back = text.parse().unwrap_or(value);
    (text, back)
}

/// The signed sweep of the arc from `start` to `end` about `centre` (positive counter-clockwise),
/// in (−2π, 2π).
pub(crate) fn sweep(start: Point, end: Point, centre: Point, ccw: bool) -> f64 {
    Move::Arc {
        to: end,
        centre,
        ccw,
    }
    .sweep(start)
}

/// The pieces that write the exact arc from `start` to `end` about `centre`, given that the
/// previous move ended at `written_start` (as the controller reads it). Values in the program's
/// units; `rule` is the radius rule in those units (0.002 mm or 0.0002 in).
///
/// Pieces that round to no movement are left out, so the result may be empty.
pub(crate) fn arc_pieces(
    written_start: Point,
    start: Point,
    end: Point,
    centre: Point,
    ccw: bool,
    decimals: usize,
    rule: f64,
) -> Result<Vec<Piece>, RuleBroken> {
    let mut out = Vec::new();
    let step = 10f64.powi(-(decimals as i32));
    let job = ArcJob {
        decimals,
        step,
        limit: RADIUS_MARGIN * rule,
    };
    job.pieces(&mut out, written_start, start, end, centre, ccw, MAX_SPLITS)?;
    Ok(out)
}

struct ArcJob {
    decimals: usize,
    step: f64,
    /// The largest radius difference accepted.
    limit: f64,
}

/// A rounded centre and what it gives.
struct Candidate {
    i: String,
    j: String,
    mismatch: f64,
}

impl ArcJob {
    #[allow(clippy::too_many_arguments)]
    fn pieces(
        &self,
        out: &mut Vec<Piece>,
        sw: Point,
        s: Point,
        e: Point,
        c: Point,
        ccw: bool,
        splits: u32,
    ) -> Result<Point, RuleBroken> {
        let turn = sweep(s, e, c, ccw);
        if turn.abs() >= SPLIT_SWEEP {
            // Half a turn or more: two arcs, split at the middle (not counted against `splits`).
            let m = mid_point(s, e, c, ccw);
            let sw = self.pieces(out, sw, s, m, c, ccw, splits)?;
            return self.pieces(out, sw, m, e, c, ccw, splits);
        }
        let (x, ex) = written(e.x, self.decimals);
        let (y, ey) = written(e.y, self.decimals);
        let ew = Point::new(ex, ey);
        if ew == sw {
            return Ok(sw);
        }
        let best = self.best_centre(sw, ew, c, ccw);
        if let Some(cand) = &best
            && cand.mismatch <= self.limit
        {
            out.push(Piece::Arc {
                x,
                y,
                i: cand.i.clone(),
                j: cand.j.clone(),
                ccw,
                end: ew,
            });
            return Ok(ew);
        }
        let radius = s.distance(c).max(e.distance(c));
        let sagitta = radius * (1.0 - (0.5 * turn.abs()).cos());
        if sagitta <= 0.5 * self.step {
            out.push(Piece::Line { x, y, end: ew });
            return Ok(ew);
        }
        if splits > 0 {
            let m = mid_point(s, e, c, ccw);
            let sw = self.pieces(out, sw, s, m, c, ccw, splits - 1)?;
            return self.pieces(out, sw, m, e, c, ccw, splits - 1);
        }
        Err(RuleBroken {
            mismatch: best.map_or(f64::INFINITY, |b| b.mismatch),
        })
    }

    /// The rounded centre with the smallest radius difference among the four roundings of the
    /// bisector-corrected centre, keeping only those on the arc's side of the chord; nearest
    /// rounding first, so it wins ties. `None` when no rounding lies on the right side.
    fn best_centre(&self, sw: Point, ew: Point, c: Point, ccw: bool) -> Option<Candidate> {
        let chord = ew - sw;
        let n = chord.normalized()?.perp();
        let mid = sw.midpoint(ew);
        let corrected = mid + n * n.dot(c - mid);
        let offset = corrected - sw;
        let roundings = |v: f64| {
            let near = written(v, self.decimals).1;
            let other = if near <= v {
                near + self.step
            } else {
                near - self.step
            };
            [near, other]
        };
        let mut best: Option<Candidate> = None;
        for i in roundings(offset.x) {
            for j in roundings(offset.y) {
                let (i_text, i_back) = written(i, self.decimals);
                let (j_text, j_back) = written(j, self.decimals);
                let centre = sw + Vec2::new(i_back, j_back);
                // Signed distance of the centre from the chord, positive on its left. A centre
                // on the chord would make a half turn, and one beyond it a longer arc the other
                // way round: keep at least half a step on the arc's own side.
                let side = n.dot(centre - sw);
                let own_side = if ccw { side } else { -side };
                if own_side < 0.5 * self.step {
                    continue;
                }
                let mismatch = (centre.distance(ew) - centre.distance(sw)).abs();
                if best.as_ref().is_none_or(|b| mismatch < b.mismatch) {
                    best = Some(Candidate {
                        i: i_text,
                        j: j_text,
                        mismatch,
                    });
                }
            }
        }
        best
    }
}

/// The point halfway along the arc (by angle; the radius interpolated between its ends).
fn mid_point(s: Point, e: Point, c: Point, ccw: bool) -> Point {
    Move::Arc {
        to: e,
        centre: c,
        ccw,
    }
    .point_at(s, 0.5)
}

/// The points of the arc from `start` to `end` about `centre` farthest along ±x and ±y: the end
/// point, and the circle's extreme in each axis direction the arc passes (an arc bulges beyond
/// its end points). The larger of the two radii is used.
pub(crate) fn arc_extremes(start: Point, end: Point, centre: Point, ccw: bool) -> Vec<Point> {
    let r = start.distance(centre).max(end.distance(centre));
    let a0 = (start - centre).angle();
    let turn = sweep(start, end, centre, ccw).abs();
    let mut out = vec![end];
    for k in 0..4 {
        let theta = k as f64 * FRAC_PI_2;
        let along = if ccw {
            (theta - a0).rem_euclid(TAU)
        } else {
            (a0 - theta).rem_euclid(TAU)
        };
        if along <= turn {
            out.push(centre + Vec2::from_angle(theta) * r);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quarter_arc_passes_one_axis_extreme() {
        // From (1, 0) to (0, 1) counter-clockwise about the origin: the top (0, 1) is the end,
        // the right (1, 0) the start; a clockwise run the long way passes left and bottom.
        let s = Point::new(1.0, 0.0);
        let e = Point::new(0.0, 1.0);
        let ccw = arc_extremes(s, e, Point::ORIGIN, true);
        assert!(
            ccw.iter().all(|p| p.x >= -1e-12 && p.y >= -1e-12),
            "{ccw:?}"
        );
        let cw = arc_extremes(s, e, Point::ORIGIN, false);
        assert!(cw.iter().any(|p| (p.x + 1.0).abs() < 1e-12));
        assert!(cw.iter().any(|p| (p.y + 1.0).abs() < 1e-12));
    }

    #[test]
    fn too_few_decimals_fall_back_to_lines_or_refuse() {
        // One decimal cannot keep 0.002 mm (NISTIR 6556 §3.5.3.2): a quarter turn of radius 10
        // is halved until its pieces are flat enough to be lines within half a step; every arc
        // piece that remains keeps the rule.
        let c = Point::new(50.0, 50.0);
        let s = c + Vec2::new(10.0, 0.0);
        let e = c + Vec2::new(0.0, 10.0);
        let pieces = arc_pieces(s, s, e, c, true, 1, 0.002).unwrap();
        assert!(!pieces.is_empty());
        let mut at = s;
        for p in &pieces {
            match p {
                Piece::Arc { i, j, end, .. } => {
                    let centre = at + Vec2::new(i.parse().unwrap(), j.parse().unwrap());
                    let mismatch = (centre.distance(*end) - centre.distance(at)).abs();
                    assert!(mismatch <= RADIUS_MARGIN * 0.002, "{p:?}");
                    at = *end;
                }
                Piece::Line { end, .. } => at = *end,
            }
        }
        assert_eq!(at, Point::new(50.0, 60.0));
        // An arc of radius 1 m is still too curved for lines after four halvings (sagitta about
        // 0.8 mm against 0.05 mm), and one decimal too coarse for arcs: refused, with the best
        // difference found.
        let c = Point::new(0.0, 0.0);
        let s = c + Vec2::from_angle(0.1) * 1000.0;
        let e = c + Vec2::from_angle(1.4) * 1000.0;
        let broken = arc_pieces(s, s, e, c, true, 1, 0.002).unwrap_err();
        assert!(broken.mismatch > RADIUS_MARGIN * 0.002, "{broken:?}");
    }

    #[test]
    fn semicircle_is_written_as_two_arcs() {
        let pieces = arc_pieces(
            Point::new(10.0, 0.0),
            Point::new(10.0, 0.0),
            Point::new(-10.0, 0.0),
            Point::ORIGIN,
            true,
            4,
            0.002,
        )
        .unwrap();
        assert_eq!(pieces.len(), 2, "{pieces:?}");
        match &pieces[0] {
            Piece::Arc {
                x, y, i, j, ccw, ..
            } => {
                assert_eq!((x.as_str(), y.as_str()), ("0.0000", "10.0000"));
                assert_eq!((i.as_str(), j.as_str()), ("-10.0000", "0.0000"));
                assert!(*ccw);
            }
            other => panic!("{other:?}"),
        }
    }
}
