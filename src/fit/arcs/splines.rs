//! The closed splines: quadrant-symmetric, vertex-centred and general, their kinks, and the
//! conversion of spans to moves.

use super::*;

/// The kinks (degrees) of a closed spline on the curve at offset `s`: entry `i` is the change of
/// direction where arc `i` meets the next, the last entry the closing joint. An arc's tangents
/// are its chord turned by ∓ half its sweep.
pub(super) fn kinks(curve: &impl ConvexCurve, s: f64, spans: &[Span]) -> Vec<f64> {
    let ends: Vec<Option<(Vec2, Vec2)>> = spans
        .iter()
        .map(|sp| {
            let chord = Chord::new(curve.point(sp.t0, s), curve.point(sp.t1, s))?;
            Some(chord.tangents(sp.k))
        })
        .collect();
    (0..ends.len())
        .map(|i| match (ends[i], ends[(i + 1) % ends.len()]) {
            (Some((_, out)), Some((into, _))) => {
                out.cross(into).atan2(out.dot(into)).abs().to_degrees()
            }
            _ => 180.0,
        })
        .collect()
}

/// A closed spline with its largest kink (closing joint included).
pub(super) struct Candidate {
    spans: Vec<Span>,
    kink: f64,
}

impl Candidate {
    fn new(curve: &impl ConvexCurve, s: f64, spans: Vec<Span>) -> Candidate {
        let kink = kinks(curve, s, &spans).into_iter().fold(0.0, f64::max);
        Candidate { spans, kink }
    }
}

/// The arc spline over `[t_start, t_end]` on the curve at outward offset `s`, with every arc
/// within `half_width` (mm) of the curve, as few arcs as the greedy method finds, the arcs'
/// errors evened out, and no large kinks where that costs few arcs (see the module docs).
///
/// Bound (guaranteed up to the accuracy of the golden-section re-measurement, ≈1e-12 mm, for
/// error profiles with one extremum between neighbouring samples, 1/16 of a stretch apart): every
/// arc within `half_width` of the curve, measured along the rays from its centre. The mirrored
/// arcs of the symmetric construction equal their originals to rounding (≈1e-13 mm), which the
/// band's millionth share absorbs.
pub(crate) fn arc_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    t_end: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    if !(t_start.is_finite() && t_end > t_start && half_width > 0.0) {
        return None;
    }
    // The searches place the extremes between the samples to within 1e-6 of the error (module
    // tests); aim 1e-5 lower so that the golden-section re-measurement passes.
    let target = half_width * (1.0 - 1e-5);
    let closed = (t_end - t_start - TAU).abs() <= 1e-12 * (1.0 + t_start.abs());
    if closed
        && curve.symmetric()
        && let Some(spans) = symmetric_spline(curve, s, t_start, target, half_width)
    {
        return Some(spans);
    }
    general_spline(curve, s, t_start, t_end, closed, target, half_width)
}

/// The quadrant-symmetric spline of a closed symmetric curve from `t_start` once round, when the
/// start lies on an axis (`t_start` a multiple of π/2 to 1e-12); `None` otherwise, or when a
/// re-measured arc does not fit.
pub(super) fn symmetric_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    target: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    let nearest = axis_quarters(t_start)?;
    // Which vertex of the quarter [0, π/2] the start is at: 0 (t = 0 or π) or 1 (π/2 or 3π/2).
    let start_vertex = nearest.rem_euclid(2.0) as usize;
    let start_vertex_angle = FRAC_PI_2 * nearest.rem_euclid(4.0);
    let options = quarter_options(curve, s, start_vertex, target);
    let evaluated = mirrored_options(curve, s, &options, start_vertex_angle, t_start, target);
    let (_, chosen, quarter) = least_kinked(evaluated)?;
    // Re-measure the quarter's arcs (the others are their mirror images).
    for span in &quarter {
        if !precise_error(curve, s, span).is_some_and(|e| e <= half_width) {
            return None;
        }
    }
    Some(chosen.spans)
}

/// A quarter chain to try: (moves of the whole spline, anchor, finish, arcs of the quarter's
/// chain, the greedy chain).
type QuarterOption = (usize, Anchor, Finish, usize, Vec<Span>);

/// `t_start` in quarter turns, when it is a multiple of π/2 (to 1e-12).
fn axis_quarters(t_start: f64) -> Option<f64> {
    let quarters = t_start / FRAC_PI_2;
    let nearest = quarters.round();
    if (quarters - nearest).abs() > 1e-12 * (1.0 + nearest.abs()) {
        return None;
    }
    Some(nearest)
}

/// The greedy quarter chains over `[0, π/2]` for every anchor and finish, in order of moves.
/// At the start vertex: a joint or the tangent arc through the start; at the other: a joint or a
/// centred minimax arc.
fn quarter_options(
    curve: &impl ConvexCurve,
    s: f64,
    start_vertex: usize,
    target: f64,
) -> Vec<QuarterOption> {
    let left: [Anchor; 2] = if start_vertex == 0 {
        [Anchor::Joint(Bend::Balanced), Anchor::HalfTangent]
    } else {
        [Anchor::Joint(Bend::Balanced), Anchor::Centred]
    };
    let right: [Finish; 2] = if start_vertex == 1 {
        [Finish::Joint(Bend::Balanced), Finish::HalfTangent]
    } else {
        [Finish::Joint(Bend::Balanced), Finish::Centred]
    };
    let mut options: Vec<QuarterOption> = Vec::new();
    for anchor in left {
        let chain = Chain {
            curve,
            s,
            at: 0.0,
            top: FRAC_PI_2,
            anchor,
        };
        for (finish, greedy) in right.iter().zip(chain.greedy(&right, target)) {
            let Some((arcs, greedy)) = greedy else {
                continue;
            };
            let joints_at = |joint: bool| if joint { 2 } else { 0 };
            let total = 4 * arcs.saturating_sub(1)
                + joints_at(matches!(anchor, Anchor::Joint(_)))
                + joints_at(matches!(finish, Finish::Joint(_)));
            let split =
                usize::from(anchor == Anchor::HalfTangent || *finish == Finish::HalfTangent);
            options.push((total + split, anchor, *finish, arcs, greedy));
        }
    }
    options.sort_by_key(|o| o.0);
    options
}

/// The options evened out and mirrored, in order of moves: all with the fewest moves; more only
/// while no kink is within the limit, up to a quarter more moves. Each with its quarter.
fn mirrored_options(
    curve: &impl ConvexCurve,
    s: f64,
    options: &[QuarterOption],
    start_vertex_angle: f64,
    t_start: f64,
    target: f64,
) -> Vec<(usize, Candidate, Vec<Span>)> {
    let fewest = options.first().map_or(0, |o| o.0);
    let budget = (fewest + fewest / 4).max(fewest + 1);
    let mut evaluated: Vec<(usize, Candidate, Vec<Span>)> = Vec::new();
    for (moves, anchor, finish, arcs, greedy) in options {
        let (moves, anchor, finish) = (*moves, *anchor, *finish);
        let settled = evaluated
            .iter()
            .any(|(m, c, _)| *m < moves && c.kink <= KINK_LIMIT_DEG);
        if moves > budget || settled {
            break;
        }
        let chain = Chain {
            curve,
            s,
            at: 0.0,
            top: FRAC_PI_2,
            anchor,
        };
        let Some(quarter) = chain.even(finish, *arcs, greedy, target) else {
            continue;
        };
        let Some(full) = mirror_quarter(&quarter, anchor, finish, start_vertex_angle, t_start)
        else {
            continue;
        };
        if full.len() == moves {
            evaluated.push((moves, Candidate::new(curve, s, full), quarter));
        }
    }
    evaluated
}

/// The fewest moves with every kink within the limit; else the fewest whose largest kink is
/// within half as much again as the smallest found. Ties: the smaller kink.
fn least_kinked(
    evaluated: Vec<(usize, Candidate, Vec<Span>)>,
) -> Option<(usize, Candidate, Vec<Span>)> {
    let least_kink = evaluated
        .iter()
        .map(|(_, c, _)| c.kink)
        .fold(f64::INFINITY, f64::min);
    let bar = if least_kink <= KINK_LIMIT_DEG {
        KINK_LIMIT_DEG
    } else {
        1.5 * least_kink
    };
    evaluated
        .into_iter()
        .filter(|(_, c, _)| c.kink <= bar)
        .min_by(|a, b| a.0.cmp(&b.0).then(a.1.kink.total_cmp(&b.1.kink)))
}

/// The closed spline of a quadrant-symmetric curve from its quarter chain over `[0, π/2]` (see
/// [`Anchor`], [`Finish`]): the quarter's arcs and their images under `t ↦ π − t`, `t ↦ −t` and
/// `t ↦ t + π`, in order from the start vertex at `vertex` (0, π/2, π or 3π/2), the arc through
/// the start split there, with parameters counted from `t_start`. `None` if the arcs do not tile
/// the curve.
pub(super) fn mirror_quarter(
    quarter: &[Span],
    anchor: Anchor,
    finish: Finish,
    vertex: f64,
    t_start: f64,
) -> Option<Vec<Span>> {
    let arcs = whole_arcs(quarter, anchor, finish)?;
    let placed = placed_once(mirror_images(&arcs), vertex);
    let out = split_at_start(&placed);
    tiled(out, t_start)
}

/// The quarter's whole arcs, `(t0, t1, k, error)`: a half arc through a vertex made whole.
fn whole_arcs(quarter: &[Span], anchor: Anchor, finish: Finish) -> Option<Vec<Span>> {
    let last = quarter.len().checked_sub(1)?;
    let mut arcs: Vec<Span> = Vec::with_capacity(4 * quarter.len());
    for (i, span) in quarter.iter().enumerate() {
        let mut arc = *span;
        if i == 0 && anchor == Anchor::HalfTangent {
            arc.t0 = -arc.t1;
        }
        if i == last && finish == Finish::HalfTangent {
            arc.t1 = PI - arc.t0;
        }
        arcs.push(arc);
    }
    Some(arcs)
}

/// Each arc and its images under `t ↦ π − t`, `t ↦ −t` and `t ↦ t + π`.
fn mirror_images(arcs: &[Span]) -> Vec<Span> {
    arcs.iter()
        .flat_map(|a| {
            [
                *a,
                Span {
                    t0: PI - a.t1,
                    t1: PI - a.t0,
                    ..*a
                },
                Span {
                    t0: -a.t1,
                    t1: -a.t0,
                    ..*a
                },
                Span {
                    t0: a.t0 + PI,
                    t1: a.t1 + PI,
                    ..*a
                },
            ]
        })
        .collect()
}

/// Each arc once, counted from the start vertex at `vertex`: its start in [0, 2π), sorted.
fn placed_once(images: Vec<Span>, vertex: f64) -> Vec<Span> {
    let mut placed: Vec<Span> = Vec::with_capacity(images.len());
    for a in images {
        let shift = (a.t0 - vertex).rem_euclid(TAU) - (a.t0 - vertex);
        let mut a = Span {
            t0: a.t0 - vertex + shift,
            t1: a.t1 - vertex + shift,
            ..a
        };
        // Angles a rounding below a full turn are the start.
        if TAU - a.t0 <= 1e-9 {
            a.t0 -= TAU;
            a.t1 -= TAU;
        }
        if !placed.iter().any(|p| (p.t0 - a.t0).abs() <= 1e-9) {
            placed.push(a);
        }
    }
    placed.sort_by(|a, b| a.t0.total_cmp(&b.t0));
    placed
}

/// The arc whose start is before the start vertex (at the end of the list, running past 2π)
/// split at it: its part after the start first, its part before the start last.
fn split_at_start(placed: &[Span]) -> Vec<Span> {
    let mut out: Vec<Span> = Vec::with_capacity(placed.len() + 1);
    let wrap = placed.iter().position(|a| a.t1 > TAU + 1e-9);
    let mut tail = None;
    for (i, a) in placed.iter().enumerate() {
        if Some(i) == wrap {
            out.push(Span {
                t0: 0.0,
                t1: a.t1 - TAU,
                ..*a
            });
            tail = Some(Span { t1: TAU, ..*a });
        } else {
            out.push(*a);
        }
    }
    out.sort_by(|a, b| a.t0.total_cmp(&b.t0));
    out.extend(tail);
    out
}

/// The arcs, which must tile [0, 2π] end to start (to 1e-9), with their joints snapped together
/// and shifted to start at `t_start`; `None` if they do not tile.
fn tiled(mut out: Vec<Span>, t_start: f64) -> Option<Vec<Span>> {
    if out.first()?.t0.abs() > 1e-9 || (out.last()?.t1 - TAU).abs() > 1e-9 {
        return None;
    }
    for w in out.windows(2) {
        if (w[0].t1 - w[1].t0).abs() > 1e-9 {
            return None;
        }
    }
    let n = out.len();
    for i in 0..n {
        let t0 = if i == 0 { 0.0 } else { out[i - 1].t1 };
        let t1 = if i + 1 == n { TAU } else { out[i].t1 };
        out[i].t0 = t0;
        out[i].t1 = t1;
    }
    for span in &mut out {
        span.t0 += t_start;
        span.t1 += t_start;
    }
    Some(out)
}

/// The spline of a closed symmetric curve from a start off its axes: chains of evened-out arcs
/// from the start to an arc centred on the next vertex, from there to one centred on the vertex
/// after, and so on round, the last chain closing at the start. A vertex within reach of the
/// start (closer to it than half the longest centred arc there) gets no arc of its own, and the
/// spline then leaves and reaches the start tangent to the curve, as it does when `tangent` is
/// set. `None` when a chain cannot be built or a re-measured arc does not fit.
pub(super) fn vertex_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    tangent: bool,
    target: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    let t_end = t_start + TAU;
    let first_vertex = (t_start / FRAC_PI_2).floor() + 1.0;
    let vertices: Vec<f64> = (0..4)
        .map(|j| (first_vertex + j as f64) * FRAC_PI_2)
        .collect();
    // Half the longest centred arc within the target at a vertex.
    let reach = |v: f64| {
        let chain = Chain {
            curve,
            s,
            at: v,
            top: v + FRAC_PI_2,
            anchor: Anchor::Centred,
        };
        chain.first(target, None).map(|arc| arc.t1 - v)
    };
    let near_start = |v: f64| {
        let gap = (v - t_start).min(t_end - v);
        reach(v).is_none_or(|r| gap < r)
    };
    let kept: Vec<f64> = vertices.into_iter().filter(|&v| !near_start(v)).collect();
    let tangent = tangent || kept.len() < 4;
    let (first_bend, last_bend) = if tangent {
        (Bend::TangentAtStart, Bend::TangentAtEnd)
    } else {
        (Bend::Balanced, Bend::Balanced)
    };
    let mut spans: Vec<Span> = Vec::new();
    let mut at = t_start;
    let mut anchor = Anchor::Joint(first_bend);
    let ends = kept
        .iter()
        .map(|&v| (v, Finish::Centred))
        .chain(std::iter::once((t_end, Finish::Joint(last_bend))));
    for (top, finish) in ends {
        if top.is_nan() || top <= at {
            return None;
        }
        let chain = Chain {
            curve,
            s,
            at,
            top,
            anchor,
        };
        let (arcs, greedy) = chain.greedy(&[finish], target).pop().flatten()?;
        let evened = chain.even(finish, arcs, &greedy, target)?;
        at = evened.last()?.t1;
        spans.extend(evened);
        anchor = Anchor::Joint(Bend::Balanced);
    }
    if (at - t_end).abs() > 1e-9 {
        return None;
    }
    for span in &spans {
        if !precise_error(curve, s, span).is_some_and(|e| e <= half_width) {
            return None;
        }
    }
    Some(spans)
}

/// The general construction (see the module docs) over `[t_start, t_end]`.
pub(super) fn general_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    t_end: f64,
    closed: bool,
    target: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    let chain = |first: Bend| Chain {
        curve,
        s,
        at: t_start,
        top: t_end,
        anchor: Anchor::Joint(first),
    };
    let plain = chain(Bend::Balanced);
    let finish = Finish::Joint(Bend::Balanced);
    let (n, greedy) = plain.greedy(&[finish], target).pop().flatten()?;
    // At most a quarter more arcs than the plain greedy spline's (one at least).
    let budget = n + (n / 4).max(1);
    // Acceptable: small kinks, and (for a closed run) a closing joint no worse than the largest
    // inner one.
    let acceptable = |c: &Candidate| acceptable_spline(curve, s, c, closed, budget);
    let evened = |c: &Chain<'_, _>, f: Finish, arcs: usize, greedy: &[Span]| {
        c.even(f, arcs, greedy, target)
            .and_then(|spans| remeasure(curve, s, t_start, &spans, half_width))
            .map(|spans| Candidate::new(curve, s, spans))
    };
    let mut candidates: Vec<Candidate> = Vec::new();
    match evened(&plain, finish, n, &greedy) {
        Some(c) => candidates.push(c),
        None => candidates.extend(
            remeasure(curve, s, t_start, &greedy, half_width)
                .map(|spans| Candidate::new(curve, s, spans)),
        ),
    }
    // Arcs centred on the vertices (re-measured already), leaving the start as a plain joint or
    // tangent to the curve.
    if closed && curve.symmetric() {
        for tangent in [false, true] {
            if candidates.iter().any(acceptable) {
                break;
            }
            candidates.extend(
                vertex_spline(curve, s, t_start, tangent, target, half_width)
                    .map(|spans| Candidate::new(curve, s, spans)),
            );
        }
    }
    if !candidates.iter().any(acceptable) {
        // The first and last arcs tangent to the curve at the start: no closing kink.
        let tangent = chain(Bend::TangentAtStart);
        let tangent_finish = Finish::Joint(Bend::TangentAtEnd);
        if let Some((m, g)) = tangent.greedy(&[tangent_finish], target).pop().flatten()
            && m <= budget
        {
            candidates.extend(evened(&tangent, tangent_finish, m, &g));
            if !candidates.iter().any(acceptable) && m < budget {
                candidates.extend(evened(&tangent, tangent_finish, m + 1, &g));
            }
        }
        if !candidates.iter().any(acceptable) {
            candidates.extend(evened(&plain, finish, n + 1, &greedy));
        }
    }
    candidates.retain(|c| c.spans.len() <= budget);
    let chosen = fewest_arcs(&candidates, acceptable)?;
    Some(chosen.spans.clone())
}

/// Acceptable: small kinks, and (for a closed run) a closing joint no worse than the largest
/// inner one, within the `budget` of arcs.
fn acceptable_spline(
    curve: &impl ConvexCurve,
    s: f64,
    c: &Candidate,
    closed: bool,
    budget: usize,
) -> bool {
    let k = kinks(curve, s, &c.spans);
    let closing = k.last().copied().unwrap_or(0.0);
    let inner = k[..k.len().saturating_sub(1)]
        .iter()
        .copied()
        .fold(0.0, f64::max);
    let kink = if closed { c.kink } else { inner };
    kink <= KINK_LIMIT_DEG && (!closed || closing <= inner + 1e-9) && c.spans.len() <= budget
}

/// The fewest arcs among the acceptable candidates; else the fewest whose largest kink is within
/// half as much again as the smallest found. Ties: the smaller kink.
fn fewest_arcs(
    candidates: &[Candidate],
    acceptable: impl Fn(&Candidate) -> bool,
) -> Option<&Candidate> {
    let least_kink = candidates
        .iter()
        .map(|c| c.kink)
        .fold(f64::INFINITY, f64::min);
    let order = |a: &&Candidate, b: &&Candidate| {
        a.spans
            .len()
            .cmp(&b.spans.len())
            .then(a.kink.total_cmp(&b.kink))
    };
    candidates
        .iter()
        .filter(|c| acceptable(c))
        .min_by(order)
        .or_else(|| {
            candidates
                .iter()
                .filter(|c| c.kink <= 1.5 * least_kink)
                .min_by(order)
        })
}

/// Re-measures each stretch precisely; one that does not fit is shortened until it does (and
/// becomes balanced), and a further balanced arc covers the rest up to the planned end. Arcs that
/// fit stay as planned, tangent first and last arcs included.
pub(super) fn remeasure(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    planned: &[Span],
    half_width: f64,
) -> Option<Vec<Span>> {
    let mut out = Vec::with_capacity(planned.len());
    let mut t0 = t_start;
    let mut i = 0;
    while i < planned.len() {
        let end = planned[i].t1;
        let mut t1 = end;
        let span = loop {
            // The planned arc as it is, when it still starts where planned.
            let fitted = if t0 == planned[i].t0 && t1 == end {
                precise_error(curve, s, &planned[i]).map(|error| Span {
                    error,
                    ..planned[i]
                })
            } else {
                fit_span(curve, s, t0, t1, Bend::Balanced, true)
            };
            match fitted {
                Some(f) if f.error <= half_width => break f,
                _ => {
                    t1 = t0 + 0.999 * (t1 - t0);
                    if t1 - t0 <= 1e-12 * (1.0 + t0.abs()) {
                        return None;
                    }
                }
            }
        };
        t0 = span.t1;
        out.push(span);
        if t1 >= end {
            i += 1;
        }
    }
    Some(out)
}

/// The spans as moves along the curve at offset `s`; the last ends exactly at `end`.
pub(crate) fn spans_to_moves(
    curve: &impl ConvexCurve,
    s: f64,
    spans: &[Span],
    end: Point,
) -> Vec<Move> {
    let mut moves = Vec::with_capacity(spans.len());
    for (i, span) in spans.iter().enumerate() {
        let a = curve.point(span.t0, s);
        let b = if i + 1 == spans.len() {
            end
        } else {
            curve.point(span.t1, s)
        };
        let to = b;
        match Chord::new(a, b) {
            Some(chord) if span.k.abs() * chord.length > 1e-12 => moves.push(Move::Arc {
                to,
                centre: chord.centre(span.k),
                ccw: span.k > 0.0,
            }),
            _ => moves.push(Move::Line { to }),
        }
    }
    moves
}
