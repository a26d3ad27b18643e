//! Cycle time of a program read back: how long the machine takes to run its moves.
//!
//! A pure estimate over the moves of a [`Trace`](super::Trace) (mm, mm/min) and the program's
//! dwells (s). Every move is visited a fixed number of times (three passes), so the work is
//! linear in the number of moves; the only buffer is the current stretch between two stops.
//!
//! # The model
//!
//! - **Lengths.** A line is its straight 3D length. An arc (G2/G3, XY plane) of radius `R` (the
//!   distance from its centre to its start, as the program's centre offsets define it) sweeping
//!   `φ` in its own sense (counter-clockwise for G3, clockwise for G2, seen from +Z) is `R·φ`
//!   long in XY; with a change `Δz` it is a helix of length `√((R·φ)² + Δz²)`. An arc whose end
//!   equals its start in X and Y is a full turn, `φ = 2π`. An arc of zero radius, or whose end
//!   lies on the start's ray from the centre at another radius, is no arc: it is timed as the
//!   straight move it then is.
//! - **Speed along one move: trapezoidal.** From its entry speed `v₀` the tool accelerates at
//!   `a` to its cruise speed `V`, cruises, and decelerates at `a` to its exit speed `v₁`; a move
//!   too short to reach `V` peaks at `v_p = √(a·L + (v₀² + v₁²)/2)` (a triangle). With
//!   constant acceleration the distance to change speed from `u` to `v` is `(v² − u²)/(2a)` and
//!   the time `(v − u)/a` (standard kinematics: HRW ch. 2). So the line from rest to rest
//!   that reaches `V` takes `L/V + V/a`, the one that does not `2·√(L/a)`.
//! - **Cruise speed.** A feed move's own feed; a rapid's `rapid_feed`. Along an arc the
//!   centripetal acceleration `v²/ρ` (uniform circular motion: HRW ch. 4) is held to `a`, so
//!   `V ≤ √(a·ρ)`, where `ρ` is the radius of curvature: `R` for a flat arc, `R + c²/R` for a
//!   helix of pitch `2π·c` (a helix of radius `R` and pitch `2πc` has curvature `R/(R² + c²)`:
//!   dC §1-5, standard differential geometry). The tangential acceleration on the arc is not
//!   combined with the centripetal one (the usual simplification; it errs a little short).
//! - **Corners: the junction deviation model.** Where two moves meet with unit directions `u`
//!   (end of the first) and `w` (start of the next), turning by `θ` (`cos θ = u·w`), the corner is
//!   taken as if rounded by the circular arc tangent to both moves whose nearest point lies `δ`
//!   (the junction deviation) from the corner, and the speed at the corner is that arc's
//!   centripetal limit. Derivation: the interior angle is `ψ = π − θ`; the arc's centre lies on
//!   the bisector at `d = r / sin(ψ/2)` from the corner, its nearest point at `d − r = δ`, so
//!   `r = δ·sin(ψ/2) / (1 − sin(ψ/2))` and `v_j = √(a·r)`. Here `sin(ψ/2) = cos(θ/2) = |u + w|/2`
//!   and `1 − sin(ψ/2) = |u − w|² / (4·(1 + sin(ψ/2)))`, so nearly straight joints lose no digits.
//!   A straight joint (`θ = 0`) sets no corner limit; a reversal (`θ = π`) stops the machine;
//!   `δ = 0` stops it at every corner that is not straight. The moves are still timed along
//!   their written lengths: the rounding arc only sets the speed. The model is the junction
//!   deviation corner model of open-source motion controllers (from memory; no publication was
//!   re-read, which is why the derivation is written out here).
//! - **Look-ahead.** Each joint's speed is at most the smaller cruise speed of its two moves and
//!   the corner limit. A backward pass then holds every entry speed to what the rest of the
//!   stretch can still decelerate from (`v ≤ √(v_next² + 2·a·L)`), and a forward pass to what the
//!   tool can have accelerated to (`v_next ≤ √(v² + 2·a·L)`): the usual two-pass planner, the
//!   piecewise form of the phase-plane method for the fastest motion along a fixed path under a
//!   bounded acceleration (BDG85, from memory). The result is feasible for every move and the
//!   fastest that is under this model.
//! - **Stops.** The machine starts and ends at rest, and stops (speed 0) at a reversal, at every
//!   switch between a rapid and a feed move, and, with [`cycle_time_with_stops`], before and
//!   after every dwell placed in the sequence. [`cycle_time`] gets the dwells as lengths only, so
//!   it cannot stop for them where the machine would not stop anyway. (In conicut's programs a
//!   pierce dwell usually falls at a switch from rapid to feed, where the machine stops in any
//!   case; the spindle delay of the opening and the pierce after a tab gap do not: there the
//!   missing stop makes [`cycle_time`] short by a corner's ramp, about `2·v_j/a`.)
//! - **Rapids** run at `rapid_feed` along the straight line with the same acceleration (a
//!   machine that moves its axes independently at rapid may take another path and time).
//! - **Dwells** (G4, spindle and pierce waits) are added as given; one that is negative or not a
//!   number adds nothing.
//! - **Zero-length moves** take no time and are passed over: the joint is between the moves on
//!   either side. A move with a coordinate that is not finite, or a length that overflows, is
//!   passed over the same way.
//!
//! The acceleration `a` is the profile's figure per axis, used along the path. A machine limited
//! per axis accelerates a diagonal faster (up to `a·√3`), so on diagonals the estimate errs long;
//! it has no jerk limit and no finite look-ahead buffer, which err short.
//!
//! # Limits that are not limits
//!
//! An acceleration that is not positive and finite (0, negative, NaN, ∞) sets no limit: every
//! move then runs at its cruise speed throughout and the time comes from the feeds alone
//! (`L/V`, no ramps, no corner or arc limits). A `rapid_feed` or a move's feed that is not
//! positive and finite sets no speed limit: with a finite acceleration such a move is a triangle
//! (`2·√(L/a)` from rest to rest), without one it takes no time. A junction deviation that is
//! negative or NaN counts as 0 (a stop at every corner that is not straight); +∞ sets no corner
//! limit. The result is finite and never NaN for any input.
//!
//! # Sources
//!
//! - HRW: D. Halliday, R. Resnick, J. Walker, *Fundamentals of Physics*, Wiley: "Motion along
//!   a straight line" (constant acceleration, ch. 2) and "Motion in two and three dimensions"
//!   (uniform circular motion, `a = v²/R`, ch. 4); chapter numbers from memory.
//! - dC: M. P. do Carmo, *Differential Geometry of Curves and Surfaces*, Prentice-Hall, 1976,
//!   §1-5 (the circular helix and its curvature); section number from memory.
//! - BDG85: J. E. Bobrow, S. Dubowsky, J. S. Gibson, "Time-optimal control of robotic
//!   manipulators along specified paths", Int. J. Robotics Research 4(3) (1985); from memory.
//! - Junction deviation corner model: derived above; the model from memory.
//! - [`DEFAULT_JUNCTION_DEVIATION`]: common practice.
//!
//! Worked examples: `docs/cycle-time.md`.

use super::TraceMove;
use serde::Serialize;
use std::f64::consts::TAU;

/// The junction deviation used when the profile gives none, mm: 0.01 mm, common practice (a
/// usual default of motion controllers, from memory; the estimate's sensitivity to it is small:
/// the corner speed goes as √δ).
pub const DEFAULT_JUNCTION_DEVIATION: f64 = 0.01;

/// What limits the machine's motion, in mm and seconds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeLimits {
    /// Acceleration along the path, mm/s² (the profile's `acceleration()` converted to mm); not
    /// positive and finite: no limit (times from the feeds alone).
    pub acceleration: f64,
    /// The rapid (G0) rate, mm/min; not positive and finite: no speed limit.
    pub rapid_feed: f64,
    /// The junction deviation δ of the corner model, mm (see the module doc); negative or NaN
    /// counts as 0.
    pub junction_deviation: f64,
}

/// How long a program takes and how far it goes.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CycleTime {
    /// `cutting_s + rapid_s + dwell_s`, seconds.
    pub total_s: f64,
    /// Time on feed moves (G1, G2, G3), seconds.
    pub cutting_s: f64,
    /// Time on rapid moves (G0), seconds.
    pub rapid_s: f64,
    /// The dwells added, seconds.
    pub dwell_s: f64,
    /// Path length of the feed moves (3D, arcs and helices exactly), mm.
    pub cut_length_mm: f64,
    /// Path length of the rapid moves (3D), mm.
    pub rapid_length_mm: f64,
}

/// The cycle time of `moves` (in program order, as read back) with the dwells `dwells_s`
/// (seconds, added) under `limits`. The dwells are not placed in the sequence, so the machine
/// does not stop for them (see [`cycle_time_with_stops`]).
pub fn cycle_time(moves: &[TraceMove], dwells_s: &[f64], limits: &TimeLimits) -> CycleTime {
    let mut time = plan(moves, &[], limits, &mut []);
    time.dwell_s = dwells_s
        .iter()
        .copied()
        .filter(|d| *d >= 0.0)
        .fold(0.0, |a, d| a + d);
    time.total_s = time.cutting_s + time.rapid_s + time.dwell_s;
    time
}

/// [`cycle_time`] with each dwell placed: `(k, seconds)` is a dwell before move `k` (an index
/// into `moves`; `moves.len()` or more is after the last move). The machine stops at each
/// placed dwell: it arrives at rest and starts again from rest. The dwells may come in any order.
pub fn cycle_time_with_stops(
    moves: &[TraceMove],
    dwells: &[(usize, f64)],
    limits: &TimeLimits,
) -> CycleTime {
    let mut stops: Vec<usize> = dwells.iter().map(|d| d.0).collect();
    stops.sort_unstable();
    let mut time = plan(moves, &stops, limits, &mut []);
    time.dwell_s = dwells
        .iter()
        .map(|d| d.1)
        .filter(|d| *d >= 0.0)
        .fold(0.0, |a, d| a + d);
    time.total_s = time.cutting_s + time.rapid_s + time.dwell_s;
    time
}

/// The time from the program's start to the end of each move of `moves`, seconds, as
/// [`cycle_time_with_stops`] plans it (each dwell counted before its move): the last one is that
/// function's `total_s` up to the dwells after the last move, and the running total follows the
/// program move by move (for the interactive view's clock).
pub fn move_end_times(
    moves: &[TraceMove],
    dwells: &[(usize, f64)],
    limits: &TimeLimits,
) -> Vec<f64> {
    let mut stops: Vec<usize> = dwells.iter().map(|d| d.0).collect();
    stops.sort_unstable();
    let mut each = vec![0.0; moves.len()];
    plan(moves, &stops, limits, &mut each);
    let mut before = vec![0.0; moves.len()];
    for &(k, seconds) in dwells {
        if let Some(b) = before.get_mut(k)
            && seconds >= 0.0
        {
            *b += seconds;
        }
    }
    let mut clock = 0.0;
    for (t, wait) in each.iter_mut().zip(before) {
        clock += wait + *t;
        *t = clock;
    }
    each
}

/// A move's shape as the planner needs it.
struct Shape {
    length: f64,
    start_dir: [f64; 3],
    end_dir: [f64; 3],
    /// Radius of curvature along the move (arcs and helices), mm.
    curvature_radius: Option<f64>,
}

/// One move of the stretch being planned.
struct Step {
    /// The move's index in the program's moves.
    index: usize,
    length: f64,
    /// Cruise speed, mm/s (∞: none).
    cruise: f64,
    /// The most the entry speed may be (joint and corner limits), mm/s.
    entry: f64,
    rapid: bool,
}

/// The limits made usable: acceleration `None` when it sets no limit; speeds in mm/s.
struct Model {
    accel: Option<f64>,
    rapid: f64,
    deviation: f64,
}

fn speed_limit(per_minute: f64) -> f64 {
    if per_minute.is_finite() && per_minute > 0.0 {
        per_minute / 60.0
    } else {
        f64::INFINITY
    }
}

/// Time on every move; the dwells are left for the caller. `stops` are sorted move indices the
/// machine stops before. `each`, when as long as `moves`, receives each move's own time.
fn plan(moves: &[TraceMove], stops: &[usize], limits: &TimeLimits, each: &mut [f64]) -> CycleTime {
    let a = limits.acceleration;
    let model = Model {
        accel: (a.is_finite() && a > 0.0).then_some(a),
        rapid: speed_limit(limits.rapid_feed),
        // f64::max returns the other operand for NaN: NaN and negatives become 0.
        deviation: limits.junction_deviation.max(0.0),
    };
    let mut out = CycleTime {
        total_s: 0.0,
        cutting_s: 0.0,
        rapid_s: 0.0,
        dwell_s: 0.0,
        cut_length_mm: 0.0,
        rapid_length_mm: 0.0,
    };
    let mut stretch: Vec<Step> = Vec::new();
    let mut next_stop = 0;
    // The previous move kept: its end direction, kind and cruise speed.
    let mut prev: Option<([f64; 3], bool, f64)> = None;
    let mut stop_pending = false;
    for (k, m) in moves.iter().enumerate() {
        while next_stop < stops.len() && stops[next_stop] <= k {
            stop_pending = true;
            next_stop += 1;
        }
        let Some(shape) = shape_of(m) else { continue };
        let mut cruise = if m.rapid {
            model.rapid
        } else {
            speed_limit(m.feed)
        };
        if let (Some(a), Some(rho)) = (model.accel, shape.curvature_radius) {
            cruise = cruise.min((a * rho).sqrt());
        }
        if m.rapid {
            out.rapid_length_mm += shape.length;
        } else {
            out.cut_length_mm += shape.length;
        }
        let entry = match (prev, model.accel) {
            (Some((dir, rapid, prev_cruise)), Some(a)) if rapid == m.rapid && !stop_pending => {
                let corner = corner_speed(dir, shape.start_dir, a, model.deviation);
                corner.min(prev_cruise).min(cruise)
            }
            _ => 0.0,
        };
        if entry == 0.0 {
            finish_stretch(&mut stretch, model.accel, &mut out, each);
        }
        stretch.push(Step {
            index: k,
            length: shape.length,
            cruise,
            entry,
            rapid: m.rapid,
        });
        prev = Some((shape.end_dir, m.rapid, cruise));
        stop_pending = false;
    }
    finish_stretch(&mut stretch, model.accel, &mut out, each);
    out.total_s = out.cutting_s + out.rapid_s;
    out
}

/// Plans a stretch that starts and ends at rest (the backward and forward passes), adds its
/// moves' times to `out` and empties it.
fn finish_stretch(
    stretch: &mut Vec<Step>,
    accel: Option<f64>,
    out: &mut CycleTime,
    each: &mut [f64],
) {
    match accel {
        Some(a) => {
            // Backward: each entry no faster than the rest can decelerate from to rest.
            let mut next_entry = 0.0_f64;
            for s in stretch.iter_mut().rev() {
                s.entry = s
                    .entry
                    .min((next_entry * next_entry + 2.0 * a * s.length).sqrt());
                next_entry = s.entry;
            }
            // Forward: each exit no faster than the move can accelerate to from its entry.
            let n = stretch.len();
            let mut entry = 0.0_f64;
            for i in 0..n {
                let reach = (entry * entry + 2.0 * a * stretch[i].length).sqrt();
                let exit = if i + 1 < n {
                    let e = stretch[i + 1].entry.min(reach);
                    stretch[i + 1].entry = e;
                    e
                } else {
                    0.0
                };
                let s = &stretch[i];
                let t = add_time(
                    out,
                    s.rapid,
                    trapezoid_time(s.length, entry, exit, s.cruise, a),
                );
                if let Some(e) = each.get_mut(s.index) {
                    *e = t;
                }
                entry = exit;
            }
        }
        None => {
            for s in stretch.iter() {
                let t = if s.cruise.is_finite() {
                    s.length / s.cruise
                } else {
                    0.0
                };
                let t = add_time(out, s.rapid, t);
                if let Some(e) = each.get_mut(s.index) {
                    *e = t;
                }
            }
        }
    }
    stretch.clear();
}

/// Adds `t` to the rapid or the cutting time; the time counted.
fn add_time(out: &mut CycleTime, rapid: bool, t: f64) -> f64 {
    // A time that is not finite can only come from figures near the f64 range's end: nothing.
    let t = if t.is_finite() { t.max(0.0) } else { 0.0 };
    if rapid {
        out.rapid_s += t;
    } else {
        out.cutting_s += t;
    }
    t
}

/// Time along `length` from `v0` to `v1` with cruise speed `cruise` (∞: none) and acceleration
/// `a`; `v0`, `v1` ≤ `cruise` and reachable from each other within `length`.
fn trapezoid_time(length: f64, v0: f64, v1: f64, cruise: f64, a: f64) -> f64 {
    let peak = (a * length + 0.5 * (v0 * v0 + v1 * v1)).sqrt();
    if peak <= cruise {
        ((peak - v0).max(0.0) + (peak - v1).max(0.0)) / a
    } else {
        let ramps = (2.0 * cruise * cruise - v0 * v0 - v1 * v1) / (2.0 * a);
        (2.0 * cruise - v0 - v1) / a + (length - ramps).max(0.0) / cruise
    }
}

/// The speed at a joint between directions `u` and `w` (unit vectors) under the junction
/// deviation model (module doc), acceleration `a`, deviation `deviation` ≥ 0.
fn corner_speed(u: [f64; 3], w: [f64; 3], a: f64, deviation: f64) -> f64 {
    let sum = norm(add(u, w));
    let diff2 = {
        let d = sub(u, w);
        dot(d, d)
    };
    // sin of half the interior angle, |u + w| / 2.
    let s = (0.5 * sum).min(1.0);
    if s <= 0.0 || s.is_nan() {
        return 0.0; // a reversal
    }
    if diff2 == 0.0 {
        return f64::INFINITY; // straight on
    }
    if deviation == 0.0 {
        return 0.0;
    }
    let one_less = diff2 / (4.0 * (1.0 + s));
    (a * deviation * s / one_less).sqrt()
}

/// Length, end directions and curvature of a move; `None` when it takes no time (zero length,
/// or a coordinate or length that is not finite).
fn shape_of(m: &TraceMove) -> Option<Shape> {
    let d = sub(m.to, m.from);
    if let Some((c, ccw)) = m.arc
        && let Some(shape) = arc_shape(m, c, ccw)
    {
        return Some(shape);
    }
    let length = norm(d);
    if !(length.is_finite() && length > 0.0) {
        return None;
    }
    let dir = scale(d, 1.0 / length);
    Some(Shape {
        length,
        start_dir: dir,
        end_dir: dir,
        curvature_radius: None,
    })
}

/// An arc's shape (module doc: lengths); `None` when it is no arc (zero radius, no sweep, or
/// figures that are not finite), to be timed as a straight move.
fn arc_shape(m: &TraceMove, c: [f64; 2], ccw: bool) -> Option<Shape> {
    let (x0, y0) = (m.from[0] - c[0], m.from[1] - c[1]);
    let (x1, y1) = (m.to[0] - c[0], m.to[1] - c[1]);
    let r = x0.hypot(y0);
    if !(r.is_finite() && r > 0.0 && x1.is_finite() && y1.is_finite()) {
        return None;
    }
    let a0 = y0.atan2(x0);
    let a1 = y1.atan2(x1);
    let full = m.from[0] == m.to[0] && m.from[1] == m.to[1];
    let sweep = if full {
        TAU
    } else {
        let s = if ccw { a1 - a0 } else { a0 - a1 }.rem_euclid(TAU);
        // rem_euclid may round a tiny negative up to TAU itself: that is no sweep either.
        if s == 0.0 || s >= TAU {
            return None;
        }
        s
    };
    let dz = m.to[2] - m.from[2];
    let flat = r * sweep;
    let length = flat.hypot(dz);
    if !(length.is_finite() && length > 0.0) {
        return None;
    }
    // Unit tangent at angle t: (−sin t, cos t) counter-clockwise, its negative clockwise; its
    // XY part scaled by the share of the length in XY, the Z part the rest.
    let (h, v) = (flat / length, dz / length);
    let sense = if ccw { 1.0 } else { -1.0 };
    let tangent = |t: f64| [-t.sin() * sense * h, t.cos() * sense * h, v];
    // A helix of radius r rising dz over the sweep: pitch parameter c = dz / sweep and radius of
    // curvature (r² + c²)/r = r·(1 + (dz / (r·sweep))²).
    let rise = dz / flat;
    Some(Shape {
        length,
        start_dir: tangent(a0),
        end_dir: tangent(if full { a0 } else { a1 }),
        curvature_radius: Some(r * (1.0 + rise * rise)),
    })
}

fn add(p: [f64; 3], q: [f64; 3]) -> [f64; 3] {
    [p[0] + q[0], p[1] + q[1], p[2] + q[2]]
}

fn sub(p: [f64; 3], q: [f64; 3]) -> [f64; 3] {
    [p[0] - q[0], p[1] - q[1], p[2] - q[2]]
}

fn scale(p: [f64; 3], k: f64) -> [f64; 3] {
    [p[0] * k, p[1] * k, p[2] * k]
}

fn dot(p: [f64; 3], q: [f64; 3]) -> f64 {
    p[0] * q[0] + p[1] * q[1] + p[2] * q[2]
}

fn norm(p: [f64; 3]) -> f64 {
    p[0].hypot(p[1]).hypot(p[2])
}

#[cfg(test)]
mod tests {
    //! Worked checks computed by hand. Formulas: constant acceleration, `s = (v² − u²)/(2a)`,
    //! `t = (v − u)/a`, and uniform circular motion `a = v²/R` (standard kinematics, HRW in
    //! the module doc); the helix's radius of curvature `(R² + c²)/R` (dC); the corner speed
    //! from the junction deviation derivation in the module doc.
    //!
    //! Tolerance: 1e-9 relative. Each expected value and each estimate is a few dozen f64
    //! operations (and at most 1e5 added terms in the look-ahead test), each within 1.1e-16
    //! relative, so both agree to well under 1e-10; the effects the tests tell apart (a ramp, a
    //! corner, a stop) are 1e-4 relative or more, so 1e-9 cannot hide any of them.

    use super::*;
    use std::f64::consts::PI;

    const A: f64 = 500.0; // mm/s²
    const FEED: f64 = 3000.0; // mm/min = 50 mm/s
    const V: f64 = 50.0; // mm/s
    const RAPID: f64 = 6000.0; // mm/min = 100 mm/s

    fn limits() -> TimeLimits {
        TimeLimits {
            acceleration: A,
            rapid_feed: RAPID,
            junction_deviation: DEFAULT_JUNCTION_DEVIATION,
        }
    }

    fn line(from: [f64; 3], to: [f64; 3]) -> TraceMove {
        TraceMove {
            line: 1,
            rapid: false,
            from,
            to,
            arc: None,
            feed: FEED,
            on: true,
            measurable: true,
        }
    }

    fn rapid(from: [f64; 3], to: [f64; 3]) -> TraceMove {
        TraceMove {
            rapid: true,
            feed: 0.0,
            ..line(from, to)
        }
    }

    fn arc(from: [f64; 3], to: [f64; 3], centre: [f64; 2], ccw: bool) -> TraceMove {
        TraceMove {
            arc: Some((centre, ccw)),
            ..line(from, to)
        }
    }

    fn close(got: f64, want: f64) -> bool {
        (got - want).abs() <= 1e-9 * want.abs().max(1e-300)
    }

    #[track_caller]
    fn assert_close(got: f64, want: f64) {
        assert!(close(got, want), "got {got}, want {want}");
    }

    /// Rest to rest along `l` mm, cruise `v`, reaching it: `l/v + v/a`.
    fn long_line_time(l: f64, v: f64) -> f64 {
        l / v + v / A
    }

    #[test]
    fn long_line_reaches_full_feed() {
        // L = 200 mm at 50 mm/s, a = 500 mm/s²: the ramps take 2 × 50²/(2·500) = 5 mm < 200 mm,
        // so t = L/v + v/a = 4 + 0.1 = 4.1 s (standard kinematics).
        let t = cycle_time(&[line([0.0; 3], [200.0, 0.0, 0.0])], &[], &limits());
        assert_close(t.cutting_s, 4.1);
        assert_close(t.total_s, 4.1);
        assert_eq!(t.rapid_s, 0.0);
        // At constant speed it would be 4 s: the ramps are counted.
        assert!(t.total_s > 200.0 / V + 0.09);
        // A diagonal in 3D is timed along its length: (30, 40, 120) is 130 mm long.
        let d = cycle_time(&[line([0.0; 3], [30.0, 40.0, 120.0])], &[], &limits());
        assert_close(d.cut_length_mm, 130.0);
        assert_close(d.cutting_s, 130.0 / V + V / A);
    }

    #[test]
    fn short_line_never_reaches_full_feed() {
        // L = 2 mm: the peak √(a·L) = √1000 ≈ 31.6 mm/s < 50 mm/s, so t = 2·√(L/a) =
        // 2·√0.004 ≈ 0.126491 s (standard kinematics).
        let t = cycle_time(&[line([0.0; 3], [0.0, 2.0, 0.0])], &[], &limits());
        assert_close(t.cutting_s, 2.0 * (2.0 / A).sqrt());
        assert!((t.cutting_s - 0.126_491).abs() < 1e-6);
        // Exactly at the threshold L = v²/a = 5 mm both formulas agree: 2·√(5/500) = 0.2 s =
        // 5/50 + 50/500.
        let e = cycle_time(&[line([0.0; 3], [5.0, 0.0, 0.0])], &[], &limits());
        assert_close(e.cutting_s, 0.2);
    }

    #[test]
    fn small_full_circle_is_held_to_the_centripetal_limit() {
        // R = 2 mm: V = √(a·R) = √1000 ≈ 31.62 mm/s < 50 mm/s (a = v²/R, standard kinematics).
        // From rest to V takes V/a and (V²)/(2a) = R/2 = 1 mm; the same down. The circle is
        // 2πR = 4π mm, so t = 2·V/a + (2πR − R)/V = (2π + 1)·√(R/a) ≈ 0.460629 s.
        let r = 2.0;
        let m = arc([r, 0.0, 0.0], [r, 0.0, 0.0], [0.0, 0.0], true);
        let t = cycle_time(&[m], &[], &limits());
        let v = (A * r).sqrt();
        let want = 2.0 * v / A + (TAU * r - r) / v;
        assert_close(t.cutting_s, want);
        assert_close(t.cutting_s, (TAU + 1.0) * (r / A).sqrt());
        assert!((t.cutting_s - 0.460_629).abs() < 1e-6);
        assert_close(t.cut_length_mm, TAU * r);
        // Clockwise it is the same full turn.
        let cw = cycle_time(&[arc(m.from, m.to, [0.0, 0.0], false)], &[], &limits());
        assert_close(cw.cutting_s, want);
        // A large circle (R = 100 mm, √(a·R) ≈ 224 mm/s) is held to the feed instead.
        let big = arc([100.0, 0.0, 0.0], [100.0, 0.0, 0.0], [0.0, 0.0], true);
        let b = cycle_time(&[big], &[], &limits());
        assert_close(b.cutting_s, long_line_time(TAU * 100.0, V));
    }

    #[test]
    fn arc_sense_and_helix_lengths_are_exact() {
        // A quarter from (R, 0) to (0, R) about the origin: π/2 counter-clockwise (G3), 3π/2
        // clockwise (G2).
        let r = 10.0;
        let ccw = arc([r, 0.0, 0.0], [0.0, r, 0.0], [0.0, 0.0], true);
        let cw = arc([r, 0.0, 0.0], [0.0, r, 0.0], [0.0, 0.0], false);
        let lc = cycle_time(&[ccw], &[], &limits()).cut_length_mm;
        let lw = cycle_time(&[cw], &[], &limits()).cut_length_mm;
        assert_close(lc, PI / 2.0 * r);
        assert_close(lw, 3.0 * PI / 2.0 * r);
        // A helix: one full turn of R = 2 mm rising 4π mm, so c = 4π / 2π = 2 mm per radian:
        // length √((2πR)² + (4π)²) = 4π√2 mm; radius of curvature (R² + c²)/R = 4 mm (dC);
        // V = √(a·4) = √2000 ≈ 44.7 mm/s < 50. Ramps 0 → V: V/a and V²/(2a) = 2 mm each, so
        // t = 2V/a + (L − 4)/V.
        let rise = 4.0 * PI;
        let h = arc([2.0, 0.0, 0.0], [2.0, 0.0, rise], [0.0, 0.0], true);
        let t = cycle_time(&[h], &[], &limits());
        let l = 4.0 * PI * 2f64.sqrt();
        let v = (A * 4.0).sqrt();
        assert_close(t.cut_length_mm, l);
        assert_close(t.cutting_s, 2.0 * v / A + (l - 4.0) / v);
    }

    #[test]
    fn collinear_pair_costs_one_line_and_a_corner_costs_between() {
        let one = cycle_time(&[line([0.0; 3], [200.0, 0.0, 0.0])], &[], &limits());
        let pair = [
            line([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [200.0, 0.0, 0.0]),
        ];
        let two = cycle_time(&pair, &[], &limits());
        // Both 4.1 s (test 1's formula).
        assert_close(two.cutting_s, one.cutting_s);
        assert_close(two.cutting_s, long_line_time(200.0, V));

        // A 90° corner at (100, 0): δ = 0.01 mm; sin(ψ/2) = sin 45° = √2/2, so the rounding
        // radius r = δ·s/(1 − s) = 0.01·(√2/2)/(1 − √2/2) ≈ 0.024142 mm and v_j = √(a·r) ≈
        // 3.4744 mm/s. Each leg: 0 → 50 (0.1 s, 2.5 mm), 50 → v_j ((50 − v_j)/500 s,
        // (2500 − v_j²)/1000 mm), the rest at 50 mm/s.
        let corner = [
            line([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [100.0, 100.0, 0.0]),
        ];
        let c = cycle_time(&corner, &[], &limits());
        let s = 2f64.sqrt() / 2.0;
        let vj = (A * DEFAULT_JUNCTION_DEVIATION * s / (1.0 - s)).sqrt();
        assert!((vj - 3.4744).abs() < 1e-4);
        let leg =
            V / A + (V - vj) / A + (100.0 - V * V / (2.0 * A) - (V * V - vj * vj) / (2.0 * A)) / V;
        assert_close(c.cutting_s, 2.0 * leg);
        // A full stop at the corner: two rest-to-rest lines, 2 × (100/50 + 50/500) = 4.2 s.
        let stop = 2.0 * long_line_time(100.0, V);
        assert!(c.cutting_s > two.cutting_s + 1e-3);
        assert!(c.cutting_s < stop - 1e-3);
        // δ = 0 stops at the corner: exactly the full stop.
        let exact = TimeLimits {
            junction_deviation: 0.0,
            ..limits()
        };
        assert_close(cycle_time(&corner, &[], &exact).cutting_s, stop);
        // A reversal stops whatever δ: out and back is two rest-to-rest lines.
        let back = [
            line([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [0.0, 0.0, 0.0]),
        ];
        assert_close(cycle_time(&back, &[], &limits()).cutting_s, stop);
    }

    #[test]
    fn look_ahead_chains_many_short_moves() {
        // 100 000 collinear moves of 0.002 mm: none can ramp to 50 mm/s alone (that takes
        // 2.5 mm), but the planner carries the speed through, so they cost the 200 mm line of
        // test 1: 4.1 s. A zero-length move in the middle takes nothing and breaks nothing.
        let n = 100_000;
        let step = 0.002;
        let mut moves: Vec<TraceMove> = (0..n)
            .map(|i| {
                line(
                    [i as f64 * step, 0.0, 0.0],
                    [(i + 1) as f64 * step, 0.0, 0.0],
                )
            })
            .collect();
        let mid = moves[n / 2].from;
        moves.insert(n / 2, line(mid, mid));
        let t = cycle_time(&moves, &[], &limits());
        assert_close(t.cut_length_mm, n as f64 * step);
        assert_close(t.cutting_s, long_line_time(n as f64 * step, V));
    }

    #[test]
    fn dwells_rapids_and_cuts_are_split() {
        // A rapid (0,0,0) → (100,0,0) at 100 mm/s: ramps 2 × 10 mm, t = 100/100 + 100/500 = 1.2 s.
        // Then a feed move straight on to (150,0,0) at 50 mm/s: the switch stops the machine, so
        // t = 50/50 + 50/500 = 1.1 s. Dwells 0.5 s and 1.25 s: 1.75 s.
        let moves = [
            rapid([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [150.0, 0.0, 0.0]),
        ];
        let t = cycle_time(&moves, &[0.5, 1.25], &limits());
        assert_close(t.rapid_s, 1.2);
        assert_close(t.cutting_s, 1.1);
        assert_eq!(t.dwell_s, 1.75);
        assert_close(t.total_s, 1.2 + 1.1 + 1.75);
        assert_eq!(t.rapid_length_mm, 100.0);
        assert_eq!(t.cut_length_mm, 50.0);
        // Dwells add nothing else: without them only dwell_s and total_s change, by 1.75 s.
        let bare = cycle_time(&moves, &[], &limits());
        assert_eq!(bare.cutting_s, t.cutting_s);
        assert_eq!(bare.rapid_s, t.rapid_s);
        assert_close(t.total_s - bare.total_s, 1.75);
        // A negative or NaN dwell adds nothing.
        assert_eq!(
            cycle_time(&moves, &[-1.0, f64::NAN], &limits()).dwell_s,
            0.0
        );
    }

    #[test]
    fn placed_dwell_stops_the_machine() {
        // Two collinear 100 mm lines with a dwell of 0.25 s before the second: a stop there, so
        // 2 × (100/50 + 50/500) = 4.2 s of cutting instead of 4.1 s, plus 0.25 s.
        let pair = [
            line([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [200.0, 0.0, 0.0]),
        ];
        let t = cycle_time_with_stops(&pair, &[(1, 0.25)], &limits());
        assert_close(t.cutting_s, 2.0 * long_line_time(100.0, V));
        assert_eq!(t.dwell_s, 0.25);
        assert_close(t.total_s, 4.2 + 0.25);
        // Placed before the first move or after the last, it changes no motion.
        let ends = cycle_time_with_stops(&pair, &[(2, 0.25), (0, 0.5)], &limits());
        assert_close(ends.cutting_s, long_line_time(200.0, V));
        assert_eq!(ends.dwell_s, 0.75);
    }

    #[test]
    fn the_running_clock_adds_each_move_and_dwell_in_order() {
        // The pair with a stop above: move 1 ends at 100/50 + 50/500 = 2.1 s; the dwell of
        // 0.25 s before move 2, then its 2.1 s: 4.45 s, the total of `cycle_time_with_stops`.
        let pair = [
            line([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [200.0, 0.0, 0.0]),
        ];
        let clock = move_end_times(&pair, &[(1, 0.25)], &limits());
        assert_eq!(clock.len(), 2);
        assert_close(clock[0], long_line_time(100.0, V));
        assert_close(clock[1], 2.0 * long_line_time(100.0, V) + 0.25);
        let total = cycle_time_with_stops(&pair, &[(1, 0.25)], &limits()).total_s;
        assert_close(clock[1], total);
        // A move that takes no time keeps the clock where it was.
        let with_still = [pair[0], line([100.0, 0.0, 0.0], [100.0, 0.0, 0.0]), pair[1]];
        let clock = move_end_times(&with_still, &[], &limits());
        assert_eq!(clock[0], clock[1]);
        assert_close(clock[2], long_line_time(200.0, V));
    }

    #[test]
    fn limits_that_are_not_limits_give_times_from_feeds() {
        let moves = [
            rapid([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [100.0, 50.0, 0.0]),
            arc([100.0, 50.0, 0.0], [100.0, 50.0, 0.0], [100.0, 48.0], true),
        ];
        // No acceleration limit: rapid 100/100 = 1 s, line 50/50 = 1 s, circle 4π/50 s.
        for a in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            let l = TimeLimits {
                acceleration: a,
                ..limits()
            };
            let t = cycle_time(&moves, &[], &l);
            assert_close(t.rapid_s, 1.0);
            assert_close(t.cutting_s, 1.0 + 4.0 * PI / V);
        }
        // No rapid rate and no acceleration: rapids take no time; with an acceleration they
        // are triangles, 2·√(100/500) s.
        let none = TimeLimits {
            acceleration: f64::NAN,
            rapid_feed: 0.0,
            junction_deviation: f64::NAN,
        };
        assert_eq!(cycle_time(&moves, &[], &none).rapid_s, 0.0);
        let tri = TimeLimits {
            rapid_feed: f64::NAN,
            ..limits()
        };
        assert_close(
            cycle_time(&moves, &[], &tri).rapid_s,
            2.0 * (100.0 / A).sqrt(),
        );
        // A NaN deviation counts as 0: the corner at (100, 0) between the rapid and the line is a
        // switch anyway, so compare a corner of two feed moves with δ = 0.
        let corner = [
            line([0.0; 3], [100.0, 0.0, 0.0]),
            line([100.0, 0.0, 0.0], [100.0, 100.0, 0.0]),
        ];
        let nan = TimeLimits {
            junction_deviation: f64::NAN,
            ..limits()
        };
        assert_close(
            cycle_time(&corner, &[], &nan).cutting_s,
            2.0 * long_line_time(100.0, V),
        );
    }

    #[test]
    fn bad_moves_take_no_time_and_nothing_is_nan() {
        let bad = [
            line([f64::NAN, 0.0, 0.0], [1.0, 0.0, 0.0]),
            line([0.0; 3], [f64::INFINITY, 0.0, 0.0]),
            line([-1e308, 0.0, 0.0], [1e308, 0.0, 0.0]),
            arc([1.0, 0.0, 0.0], [2.0, 0.0, 0.0], [f64::NAN, 0.0], true),
            TraceMove {
                feed: f64::NAN,
                ..line([0.0; 3], [0.0; 3])
            },
        ];
        let t = cycle_time(&bad, &[], &limits());
        for v in [
            t.total_s,
            t.cutting_s,
            t.rapid_s,
            t.cut_length_mm,
            t.rapid_length_mm,
        ] {
            assert!(v.is_finite(), "{t:?}");
        }
        // The arc with a NaN centre is timed as its 1 mm chord; the rest take nothing.
        assert_close(t.cut_length_mm, 1.0);
        assert_close(t.cutting_s, 2.0 * (1.0 / A).sqrt());
        // An arc of zero radius is its straight move: (0,0) → (3,4) about (0,0) is 5 mm.
        let z = arc([0.0; 3], [3.0, 4.0, 0.0], [0.0, 0.0], false);
        assert_close(cycle_time(&[z], &[], &limits()).cut_length_mm, 5.0);
        // A feed move with no feed (0) is limited by the acceleration alone: a triangle.
        let f0 = TraceMove {
            feed: 0.0,
            ..line([0.0; 3], [8.0, 0.0, 0.0])
        };
        assert_close(
            cycle_time(&[f0], &[], &limits()).cutting_s,
            2.0 * (8.0 / A).sqrt(),
        );
        let empty = cycle_time(&[], &[], &limits());
        assert_eq!(empty.total_s, 0.0);
        assert_eq!(empty.cut_length_mm, 0.0);
    }
}
