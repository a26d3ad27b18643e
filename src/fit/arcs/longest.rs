//! The longest-arc search (secant, then regula falsi) and the greedy chain of arcs it builds.

use super::*;

/// The arc `fit(x)` over the longest stretch, its far end `x` in `(x0, top]`, whose error is at
/// most `target`; `guess` is a likely end. `None` when not even a tiny stretch fits.
///
/// The error grows with the stretch about as its cube, so the scaled miss `∛(error / target) − 1`
/// is nearly linear in `x`, and −1 at `x0`. Until the end is bracketed, the secant through the
/// last two points on one side (at first `(x0, −1)` and the guess) predicts it, aimed 0.1 % past
/// the prediction so as to cross it; then regula falsi (Illinois) closes in, to
/// [`STRETCH_PRECISION`]. Ends with no arc (a sweep of 179° or more) count as too long, with no
/// value: the bracket is then halved. The end kept is always one whose arc fits.
pub(super) fn longest(
    fit: &dyn Fn(f64) -> Option<Span>,
    x0: f64,
    top: f64,
    target: f64,
    guess: Option<f64>,
) -> Option<Span> {
    let width = top - x0;
    if width.is_nan() || width <= 0.0 {
        return None;
    }
    let miss = |x: f64| fit(x).map(|f| ((f.error / target).cbrt() - 1.0, f));
    let mut bracket = Bracket::new(x0, top);
    let mut x = guess.map_or(x0 + 0.25 * width, |g| g.min(top));
    if x.is_nan() || x <= x0 {
        x = x0 + 0.5 * width;
    }
    for _ in 0..100 {
        match miss(x) {
            Some((m, f)) if m <= 0.0 => {
                if bracket.fits(x, m, f) {
                    break;
                }
            }
            other => bracket.too_long(x, other.map(|(m, _)| m)),
        }
        let h = bracket.hi.map_or(top, |(h, _)| h);
        if h - bracket.lo <= 1e-12 * width.max(1.0) {
            break;
        }
        x = bracket.next(h);
    }
    bracket.best
}

/// What [`longest`] knows about the far end: the longest end known to fit, the shortest known
/// not to, and the points before them (for the secants).
struct Bracket {
    x0: f64,
    top: f64,
    /// The longest end known to fit and its miss (at first `x0`, miss −1), and its arc.
    lo: f64,
    f_lo: f64,
    best: Option<Span>,
    /// The end that fitted before `lo`.
    lo_before: (f64, f64),
    /// The shortest end known not to fit and its miss (`None`: no arc), and the one before.
    hi: Option<(f64, Option<f64>)>,
    hi_before: Option<(f64, f64)>,
    /// The side of the last evaluation: −1 fitted, 1 too long, 0 none yet (Illinois halving).
    side: i8,
}

impl Bracket {
    fn new(x0: f64, top: f64) -> Self {
        Bracket {
            x0,
            top,
            lo: x0,
            f_lo: -1.0,
            best: None,
            lo_before: (x0, -1.0),
            hi: None,
            hi_before: None,
            side: 0,
        }
    }

    /// Records an end `x` that fits with miss `m`; `true` when the search is done (the miss
    /// within [`STRETCH_PRECISION`], or `x` at the top).
    fn fits(&mut self, x: f64, m: f64, f: Span) -> bool {
        if self.best.is_some() {
            self.lo_before = (self.lo, self.f_lo);
        }
        self.lo = x;
        self.f_lo = m;
        self.best = Some(f);
        if m > -STRETCH_PRECISION || x >= self.top {
            return true;
        }
        if self.side == -1
            && let Some((_, Some(fh))) = self.hi.as_mut()
        {
            *fh *= 0.5;
        }
        self.side = -1;
        false
    }

    /// Records an end `x` that is too long, with its miss (`None`: no arc).
    fn too_long(&mut self, x: f64, m: Option<f64>) {
        if let Some((h, Some(fh))) = self.hi {
            self.hi_before = Some((h, fh));
        }
        self.hi = Some((x, m));
        if self.side == 1 {
            self.f_lo *= 0.5;
        }
        self.side = 1;
    }

    /// The next end to try, with `h` the bracket's upper end (`top` while nothing is known to
    /// be too long).
    fn next(&self, h: f64) -> f64 {
        let (x0, lo, f_lo) = (self.x0, self.lo, self.f_lo);
        let x = match self.hi {
            // Nothing too long yet: extrapolate past the last fits.
            None => {
                let root = secant(self.lo_before, (lo, f_lo));
                root + 1e-3 * (root - x0)
            }
            // Nothing fits yet: extrapolate below the last misses.
            Some((h, Some(fh))) if self.best.is_none() => {
                let root = secant(self.hi_before.unwrap_or((x0, -1.0)), (h, fh));
                root - 1e-3 * (root - x0)
            }
            Some((h, Some(fh))) => secant((lo, f_lo), (h, fh)),
            Some((h, None)) => 0.5 * (lo + h),
        };
        // Strictly inside the bracket, or `top` itself while nothing is known to be too long.
        if self.hi.is_none() && x >= self.top {
            self.top
        } else if !(x > lo && x < h) {
            0.5 * (lo + h)
        } else {
            x
        }
    }
}

/// The root of the line through `(xa, fa)` and `(xb, fb)`; NaN when it is flat.
fn secant((xa, fa): (f64, f64), (xb, fb): (f64, f64)) -> f64 {
    if fb != fa {
        xb - fb * (xb - xa) / (fb - fa)
    } else {
        f64::NAN
    }
}

/// How a chain of arcs begins at its anchor parameter `at`: the first arc as a function of its
/// far end `x`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Anchor {
    /// A joint at `at`; the first arc runs from there, bent as given.
    Joint(Bend),
    /// The minimax arc over `[2 at − x, x]`, centred on `at` (a vertex).
    Centred,
    /// The half `[at, x]` of the arc through the curve's point at `at`, tangent there; the other
    /// half is its mirror image, so the whole arc must sweep less than [`MAX_SWEEP`].
    HalfTangent,
}

/// How a chain of arcs ends at its end parameter `top`: the last arc from the last joint `t`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Finish {
    /// A joint at `top`; the last arc ends there, bent as given.
    Joint(Bend),
    /// The minimax arc over `[t, 2 top − t]`, centred on `top`.
    Centred,
    /// The half `[t, top]` of the arc through the curve's point at `top`, tangent there.
    HalfTangent,
}

/// A chain of arcs from `at` to `top`: an anchored first arc, balanced arcs, a finishing arc.
pub(super) struct Chain<'c, C: ConvexCurve> {
    pub(super) curve: &'c C,
    pub(super) s: f64,
    pub(super) at: f64,
    pub(super) top: f64,
    pub(super) anchor: Anchor,
}

/// The result of building a chain with a fixed number of arcs and a common error.
pub(super) enum Shot {
    /// The arcs reached the end before all were used: the error has room to spare.
    Early,
    /// The arcs and the finishing arc's scaled miss `∛(last / e) − 1` (`None`: no arc fits).
    Spans(Vec<Span>, Option<f64>),
    /// Not even a tiny stretch fits: the error is too small.
    Fail,
}

impl<C: ConvexCurve> Chain<'_, C> {
    pub(super) fn fit(&self, t0: f64, t1: f64, bend: Bend) -> Option<Span> {
        fit_span(self.curve, self.s, t0, t1, bend, false)
    }

    /// The whole arc of a half tangent arc over `[t0, t1]` sweeps twice as much.
    pub(super) fn half_tangent(&self, t0: f64, t1: f64, bend: Bend) -> Option<Span> {
        let span = self.fit(t0, t1, bend)?;
        let chord = Chord::new(self.curve.point(t0, self.s), self.curve.point(t1, self.s))?;
        (4.0 * chord.half_sweep(span.k) < MAX_SWEEP).then_some(span)
    }

    /// The first arc, ending at `x`.
    pub(super) fn first_at(&self, x: f64) -> Option<Span> {
        match self.anchor {
            Anchor::Joint(bend) => self.fit(self.at, x, bend),
            Anchor::Centred => self.fit(2.0 * self.at - x, x, Bend::Balanced),
            Anchor::HalfTangent => self.half_tangent(self.at, x, Bend::TangentAtStart),
        }
    }

    /// The longest first arc within `e`.
    pub(super) fn first(&self, e: f64, guess: Option<f64>) -> Option<Span> {
        let reach = match self.anchor {
            Anchor::Joint(_) => MAX_STRETCH,
            Anchor::Centred | Anchor::HalfTangent => 0.5 * MAX_STRETCH,
        };
        let top = self.top.min(self.at + reach);
        longest(&|x| self.first_at(x), self.at, top, e, guess)
    }

    /// The longest balanced arc from `t` within `e`.
    pub(super) fn next(&self, t: f64, e: f64, guess: Option<f64>) -> Option<Span> {
        let top = self.top.min(t + MAX_STRETCH);
        longest(&|x| self.fit(t, x, Bend::Balanced), t, top, e, guess)
    }

    /// The finishing arc from the last joint `t`.
    pub(super) fn finish(&self, finish: Finish, t: f64) -> Option<Span> {
        // No single arc follows more than [`MAX_STRETCH`] of the parameter.
        let stretch = match finish {
            Finish::Joint(_) => self.top - t,
            Finish::Centred | Finish::HalfTangent => 2.0 * (self.top - t),
        };
        if !(stretch > 0.0 && stretch <= MAX_STRETCH) {
            return None;
        }
        match finish {
            Finish::Joint(bend) => self.fit(t, self.top, bend),
            Finish::Centred => self.fit(t, 2.0 * self.top - t, Bend::Balanced),
            Finish::HalfTangent => self.half_tangent(t, self.top, Bend::TangentAtEnd),
        }
    }

    /// The greedy chain within `e`: for each of `finishes`, the number of arcs of the shortest
    /// chain ending with it (first arc, balanced arcs each the longest within `e`, finishing
    /// arc) and a greedy chain to start evening out from; `None` if there is none.
    ///
    /// A balanced joint finish is the balanced arc from the last joint reaching `top`, so it is
    /// found by the greedy step itself (a first arc reaching `top` is a chain of one arc). Any
    /// other finish that has not fitted by then needs one joint more, short of `top`: one arc
    /// more than that chain, which seeds its evening out.
    pub(super) fn greedy(&self, finishes: &[Finish], e: f64) -> Vec<Option<(usize, Vec<Span>)>> {
        let mut chains: Vec<Option<(usize, Vec<Span>)>> = vec![None; finishes.len()];
        let Some(first) = self.first(e, None) else {
            return chains;
        };
        let mut spans = vec![first];
        let mut t = first.t1;
        while spans.len() < 1_000_000 {
            if t >= self.top {
                // The last arc reached the end: a balanced joint finish.
                for (chain, &finish) in chains.iter_mut().zip(finishes) {
                    if chain.is_some() {
                        continue;
                    }
                    *chain = match finish {
                        Finish::Joint(Bend::Balanced) => Some((spans.len(), spans.clone())),
                        _ if spans.len() > 1 => Some((spans.len() + 1, spans.clone())),
                        _ => None,
                    };
                }
                break;
            }
            for (chain, &finish) in chains.iter_mut().zip(finishes) {
                if chain.is_none()
                    && finish != Finish::Joint(Bend::Balanced)
                    && let Some(last) = self.finish(finish, t).filter(|f| f.error <= e)
                {
                    let mut done = spans.clone();
                    done.push(last);
                    *chain = Some((done.len(), done));
                }
            }
            if chains.iter().all(Option::is_some) {
                break;
            }
            let guess = spans.last().map(|sp| t + (sp.t1 - sp.t0));
            let Some(span) = self.next(t, e, guess) else {
                break;
            };
            t = span.t1;
            spans.push(span);
        }
        chains
    }

    /// The chain of exactly `arcs` arcs whose first `arcs − 1` are each the longest within `e`;
    /// `guide` (an earlier shot and its error) supplies the guesses.
    pub(super) fn shoot(
        &self,
        finish: Finish,
        arcs: usize,
        e: f64,
        guide: Option<&(Vec<Span>, f64)>,
    ) -> Shot {
        let scale = guide.map_or(1.0, |(_, e_was)| (e / e_was).cbrt());
        // From the earlier shot's arc `i`, scaled by the cube law; else the last arc's length.
        let guess = |i: usize, from: f64, previous: Option<&Span>| {
            guide
                .and_then(|(spans, _)| spans.get(i))
                .map(|sp| {
                    let origin = if i == 0 { self.at } else { sp.t0 };
                    from + (sp.t1 - origin) * scale
                })
                .or_else(|| previous.map(|sp| from + (sp.t1 - sp.t0)))
        };
        let Some(first) = self.first(e, guess(0, self.at, None)) else {
            return Shot::Fail;
        };
        if arcs == 1 {
            return if first.t1 >= self.top {
                Shot::Spans(vec![first], Some(-1.0))
            } else {
                Shot::Spans(vec![first], None)
            };
        }
        let mut t = first.t1;
        let mut spans = vec![first];
        for i in 1..arcs - 1 {
            if t >= self.top {
                return Shot::Early;
            }
            let Some(span) = self.next(t, e, guess(i, t, spans.last())) else {
                return Shot::Fail;
            };
            t = span.t1;
            spans.push(span);
        }
        if t >= self.top {
            return Shot::Early;
        }
        match self.finish(finish, t) {
            Some(last) => {
                let miss = (last.error / e).cbrt() - 1.0;
                spans.push(last);
                Shot::Spans(spans, Some(miss))
            }
            None => Shot::Spans(spans, None),
        }
    }

    /// Even out: the smallest common error `e* ≤ target` with which `arcs − 1` greedy arcs leave
    /// a finishing arc within `e*`, and those `arcs` arcs; `greedy` is the greedy chain within
    /// `target` (of `arcs` arcs or fewer). The finishing arc's error falls as `e*` grows; each
    /// arc's stretch grows about as `∛e*`, so the miss `∛(last / e*) − 1` is nearly linear in
    /// `∛e*`: the first guess shares the greedy chain's length out equally
    /// (`∛e* = ∛target (n + m) / arcs` for `n` greedy arcs whose last misses by `m`), then
    /// regula falsi (Illinois) on `∛e*`, at most 12 shots, stopping when the finishing arc's
    /// error is within 0.3 % below `e*`. Keeps the best `e*` that works; `None` if none did.
    pub(super) fn even(
        &self,
        finish: Finish,
        arcs: usize,
        greedy: &[Span],
        target: f64,
    ) -> Option<Vec<Span>> {
        let n = greedy.len();
        let f_greedy = greedy
            .last()
            .map_or(1.0, |last| (last.error / target).cbrt() - 1.0);
        if n == arcs && (n < 2 || f_greedy > -1e-3) {
            return Some(greedy.to_vec());
        }
        if n > arcs || f_greedy > 0.0 {
            return None;
        }
        // Scaled miss and spans at the common error u³: fewer arcs suffice (−1), no arc fits (+1).
        let miss = |u: f64, guide: &(Vec<Span>, f64)| match self.shoot(
            finish,
            arcs,
            u * u * u,
            Some(guide),
        ) {
            Shot::Early => (-1.0, None),
            Shot::Fail => (1.0, None),
            Shot::Spans(spans, m) => (m.unwrap_or(1.0), Some(spans)),
        };
        let u_target = target.cbrt();
        // With more arcs than the greedy chain's, the target leaves room to spare.
        let (mut hi, mut f_hi) = (u_target, if n == arcs { f_greedy } else { -1.0 });
        let mut lo: Option<(f64, f64)> = None;
        let mut guide = (greedy.to_vec(), target);
        let mut best = (n == arcs).then(|| greedy.to_vec());
        let mut side = 0i8;
        let mut first = true;
        for _ in 0..12 {
            let u = match lo {
                // Share the length out equally, a little lower so as to cross the root.
                None if first => u_target * (n as f64 + f_greedy) / arcs as f64 * (1.0 - 1e-3),
                None => hi * (arcs as f64 + f_hi) / arcs as f64 * (1.0 - 1e-3),
                Some((l, f_l)) => hi - f_hi * (hi - l) / (f_hi - f_l),
            };
            first = false;
            let l = lo.map_or(0.0, |(l, _)| l);
            let u = if u > l && u < hi { u } else { 0.5 * (l + hi) };
            let (f, spans) = miss(u, &guide);
            if let Some(sp) = &spans {
                guide = (sp.clone(), u * u * u);
            }
            if f <= 0.0 {
                hi = u;
                f_hi = f;
                if spans.is_some() {
                    best = spans;
                }
                if side == -1
                    && let Some((_, f_l)) = lo.as_mut()
                {
                    *f_l *= 0.5;
                }
                side = -1;
                if f > -1e-3 && best.is_some() {
                    break;
                }
            } else {
                lo = Some((u, f));
                if side == 1 {
                    f_hi *= 0.5;
                }
                side = 1;
            }
            if lo.is_some_and(|(l, _)| hi - l <= 1e-4 * hi) && best.is_some() {
                break;
            }
        }
        best
    }
}
