//! Choosing one member of a four-sided bay's tangent family by a rule.
//!
//! Every rule is an equation along the Newton line (see [`super::quad_family`]):
//!
//! | rule | equation in t | degree |
//! |---|---|---|
//! | largest | `d(a²b²)/dt = 0` | 2 |
//! | given area A | `a²b² = (A/π)²` | 3 |
//! | given a² + b² = S | `a² + b² = S` | 2 |
//! | given semi-major A (or semi-minor B) | `a²b² − A² (a² + b²) + A⁴ = 0`, i.e. `(A² − a²)(A² − b²) = 0` | 3 |
//! | roundest | `d/dt [(a² + b²)² / (a²b²)] = 0`, i.e. `2 S′P − S P′ = 0` | 4 |
//! | centre nearest X | projection of X on the Newton line | 1 |
//!
//! `(a² + b²)²/(a²b²) = (1 + r²)²/r²` with `r = b/a` falls as `r` grows, so its minimum is the
//! member of least eccentricity. All real roots are listed (those outside `0 < t < 1` are conics
//! touching the side *lines* outside the bay: hyperbolas, or ellipses beyond the third diagonal's
//! midpoint), and the cuttable ones are those with `0 < t < 1` (docs/sources.md M6, surprise S5).

use super::candidate::{Candidate, Solution};
use super::conic::ConicKind;
use super::quad_family::TangentFamily;
use crate::geom::Point;
use crate::geom::roots as poly;
use std::f64::consts::PI;

/// Relative agreement required between a root's semi-axis and the requested one, to tell
/// whether the requested size is the member's semi-major or semi-minor axis.
pub const AXIS_MATCH_RELATIVE: f64 = 1e-7;

/// A rule picking one member of a family (or one ellipse of a bay).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Rule {
    /// The largest ellipse touching every side.
    Largest,
    /// The largest ellipse inside the bay, touching at least three sides.
    LargestInside,
    /// The member of least eccentricity.
    Roundest,
    /// The member(s) of this area (mm²).
    Area(f64),
    /// The member(s) with `a² + b²` equal to this (mm²).
    SemiAxesSquared(f64),
    /// The member(s) with this semi-major axis (mm).
    SemiMajor(f64),
    /// The member(s) with this semi-minor axis (mm).
    SemiMinor(f64),
    /// The member whose centre is nearest this point (three-sided bays: exactly this centre).
    CentreNear(Point),
}

impl Rule {
    /// The rule in words, for reports.
    pub fn describe(&self) -> String {
        match self {
            Rule::Largest => "largest touching every side".into(),
            Rule::LargestInside => "largest that fits inside".into(),
            Rule::Roundest => "roundest (least eccentricity)".into(),
            Rule::Area(a) => format!("area {a} mm²"),
            Rule::SemiAxesSquared(s) => format!("a² + b² = {s} mm²"),
            Rule::SemiMajor(a) => format!("semi-major axis {a} mm"),
            Rule::SemiMinor(b) => format!("semi-minor axis {b} mm"),
            Rule::CentreNear(p) => format!("centre nearest ({}, {})", p.x, p.y),
        }
    }
}

/// The member at `t` as a candidate, classified by `det Σ = a²b²` and `tr Σ = a² + b²`.
pub fn member(family: &TangentFamily, t: f64, corners: &[Point]) -> Candidate {
    let det = family.axes_product_squared(t);
    let trace = family.axes_sum_squared(t);
    let scale = trace.abs().max(1e-300);
    let inside = t > 0.0 && t < 1.0;
    let (kind, ellipse, note) = if det > 1e-12 * scale * scale && trace > 0.0 {
        match family.ellipse(t) {
            Ok(e) => {
                let circle = (e.a() - e.b()) <= 1e-9 * e.a();
                let kind = if circle {
                    ConicKind::Circle
                } else {
                    ConicKind::Ellipse
                };
                let note = if inside {
                    "inside the bay, touching all four sides".to_string()
                } else {
                    "touches the four side lines but lies outside the bay".to_string()
                };
                (kind, Some(e), note)
            }
            Err(e) => (ConicKind::DoubleLine, None, e.to_string()),
        }
    } else if det < -1e-12 * scale * scale {
        (
            ConicKind::Hyperbola,
            None,
            "a hyperbola touching the four side lines".to_string(),
        )
    } else if det > 1e-12 * scale * scale {
        (ConicKind::Imaginary, None, "no real points".to_string())
    } else {
        (
            ConicKind::DoubleLine,
            None,
            "flattened to a segment (a diagonal or the third diagonal)".to_string(),
        )
    };
    let residual = ellipse
        .map(|e| super::touch_points(&e, corners).1)
        .unwrap_or(0.0);
    Candidate {
        kind,
        cuttable: inside && ellipse.is_some(),
        ellipse,
        parameter: Some(t),
        note,
        residual,
    }
}

/// Why a rule has no cuttable answer in a four-sided bay.
#[derive(Debug, Clone, PartialEq)]
pub struct RuleFailure {
    pub reason: String,
    /// What was found anyway (conics outside the bay, for the listing).
    pub candidates: Vec<Candidate>,
}

/// Applies `rule` to the family of the counter-clockwise convex quadrilateral `corners`.
pub fn choose(
    family: &TangentFamily,
    corners: &[Point],
    rule: &Rule,
) -> Result<Solution, RuleFailure> {
    match *rule {
        Rule::Largest | Rule::LargestInside => choose_largest(family, corners),
        Rule::Area(area) => choose_area(family, corners, area),
        Rule::SemiAxesSquared(s) => choose_semi_axes_squared(family, corners, s),
        Rule::SemiMajor(axis) => choose_semi_axis(family, corners, axis, true),
        Rule::SemiMinor(axis) => choose_semi_axis(family, corners, axis, false),
        Rule::Roundest => choose_roundest(family, corners),
        Rule::CentreNear(x) => choose_centre_near(family, corners, x),
    }
}

fn fail(reason: String, candidates: Vec<Candidate>) -> RuleFailure {
    RuleFailure { reason, candidates }
}

/// The largest member: the one maximum of `a²b²` along the family.
fn choose_largest(family: &TangentFamily, corners: &[Point]) -> Result<Solution, RuleFailure> {
    let t = family
        .largest_area_parameter()
        .ok_or_else(|| fail("the area has no maximum inside the bay".into(), vec![]))?;
    let c = member(family, t, corners);
    pick_one(
        vec![c],
        "the only maximum of the area along the family".into(),
    )
}

/// The member(s) of area `area`: roots of `a²b² = (A/π)²`.
fn choose_area(
    family: &TangentFamily,
    corners: &[Point],
    area: f64,
) -> Result<Solution, RuleFailure> {
    if !(area > 0.0 && area.is_finite()) {
        return Err(fail(
            format!("the area must be positive (got {area})"),
            vec![],
        ));
    }
    let largest_area = family
        .largest_area_parameter()
        .map(|t| PI * family.axes_product_squared(t).max(0.0).sqrt());
    let target = (area / PI).powi(2);
    let eq = poly::add_scaled(&family.axes_product_squared_poly(), &[target], -1.0);
    let cands = all_members(family, corners, &eq);
    pick_roundest(cands, |_| true).map_err(|c| {
        fail(
            format!(
                "no ellipse of area {area:.3} mm² touches all four sides inside the bay; \
                 the largest that does has area {:.3} mm²",
                largest_area.unwrap_or(0.0)
            ),
            c,
        )
    })
}

/// The member(s) with `a² + b² = s`.
fn choose_semi_axes_squared(
    family: &TangentFamily,
    corners: &[Point],
    s: f64,
) -> Result<Solution, RuleFailure> {
    if !(s > 0.0 && s.is_finite()) {
        return Err(fail(format!("a² + b² must be positive (got {s})"), vec![]));
    }
    let sum = family.axes_sum_squared_poly();
    let eq = poly::add_scaled(&sum, &[s], -1.0);
    let cands = all_members(family, corners, &eq);
    let (lo, hi) = range_on_unit(&sum);
    pick_roundest(cands, |_| true).map_err(|c| {
        fail(
            format!(
                "no ellipse touching all four sides inside the bay has a² + b² = {s:.3} \
                 mm²; inside the bay a² + b² runs from {lo:.3} to {hi:.3} mm²"
            ),
            c,
        )
    })
}

/// The member(s) with semi-major (`major`) or semi-minor axis `axis`:
/// roots of `(A² − a²)(A² − b²) = 0`, those where `axis` is the other axis marked not cuttable.
fn choose_semi_axis(
    family: &TangentFamily,
    corners: &[Point],
    axis: f64,
    major: bool,
) -> Result<Solution, RuleFailure> {
    let word = if major { "semi-major" } else { "semi-minor" };
    if !(axis > 0.0 && axis.is_finite()) {
        return Err(fail(
            format!("the {word} axis must be positive (got {axis})"),
            vec![],
        ));
    }
    let sum = family.axes_sum_squared_poly();
    let prod = family.axes_product_squared_poly();
    let a2 = axis * axis;
    // (A² − a²)(A² − b²) = a²b² − A²(a² + b²) + A⁴
    let eq = poly::add_scaled(&poly::add_scaled(&prod, &sum, -a2), &[a2 * a2], 1.0);
    let mut cands = all_members(family, corners, &eq);
    for c in &mut cands {
        mark_other_axis(c, axis, major, word);
    }
    pick_roundest(cands, |_| true).map_err(|c| {
        fail(
            format!(
                "no ellipse touching all four sides inside the bay has a {word} axis of \
                 {axis:.3} mm"
            ),
            c,
        )
    })
}

/// Marks `c` not cuttable when `axis` is its other semi-axis rather than the one asked for.
fn mark_other_axis(c: &mut Candidate, axis: f64, major: bool, word: &str) {
    let Some(e) = c.ellipse else {
        return;
    };
    let (mine, other) = if major {
        (e.a(), e.b())
    } else {
        (e.b(), e.a())
    };
    if (mine - axis).abs() > AXIS_MATCH_RELATIVE * axis
        && (other - axis).abs() <= AXIS_MATCH_RELATIVE * axis
    {
        c.cuttable = false;
        c.note = format!(
            "{axis} mm is this ellipse's {} axis, not its {word} axis",
            if major { "semi-minor" } else { "semi-major" }
        );
    }
}

/// The member of least eccentricity: roots of `2 S′ P − S P′ = 0` in (0, 1), the roundest taken.
fn choose_roundest(family: &TangentFamily, corners: &[Point]) -> Result<Solution, RuleFailure> {
    let sum = family.axes_sum_squared_poly();
    let prod = family.axes_product_squared_poly();
    // 2 S′ P − S P′ = 0
    let ds = poly::derivative(&sum);
    let dp = poly::derivative(&prod);
    let eq = poly::add_scaled(
        &poly::mul(&poly::mul(&[2.0], &ds), &prod),
        &poly::mul(&sum, &dp),
        -1.0,
    );
    let roots = poly::real_roots_in(&eq, 0.0, 1.0);
    let cands: Vec<Candidate> = roots
        .iter()
        .filter(|t| **t > 0.0 && **t < 1.0)
        .map(|&t| member(family, t, corners))
        .collect();
    let best = cands
        .iter()
        .enumerate()
        .filter(|(_, c)| c.cuttable)
        .max_by(|(_, x), (_, y)| ratio(x).total_cmp(&ratio(y)))
        .map(|(i, _)| i);
    match best {
        Some(i) => Solution::new(
            cands,
            i,
            "the member whose axes are closest to equal (least eccentricity)".into(),
        )
        .ok_or_else(|| fail("no cuttable member".into(), vec![])),
        None => Err(fail(
            "no member of least eccentricity was found inside the bay".into(),
            cands,
        )),
    }
}

/// The member whose centre is the projection of `x` on the Newton line.
fn choose_centre_near(
    family: &TangentFamily,
    corners: &[Point],
    x: Point,
) -> Result<Solution, RuleFailure> {
    if family.is_parallelogram() {
        return Err(fail(
            "in a parallelogram every ellipse touching the four sides has the same \
             centre (where the diagonals cross), so a centre does not pick one; use \
             rule largest or roundest"
                .into(),
            vec![],
        ));
    }
    let (m1, m2) = family.newton_segment();
    let w = m2 - m1;
    let t = (x - m1).dot(w) / w.length_squared();
    if !(t > 0.0 && t < 1.0) {
        return Err(fail(
            format!(
                "the centres of ellipses touching all four sides lie strictly between \
                 ({:.3}, {:.3}) and ({:.3}, {:.3}) (the midpoints of the diagonals); the \
                 point ({:.3}, {:.3}) is nearest an end, where the ellipse flattens to a \
                 line. Give a point nearer the middle of that segment",
                m1.x, m1.y, m2.x, m2.y, x.x, x.y
            ),
            vec![],
        ));
    }
    let c = member(family, t, corners);
    pick_one(
        vec![c],
        "the centre on the Newton line nearest the given point".into(),
    )
}

/// `b/a` of a candidate, 0 when it has no ellipse.
fn ratio(c: &Candidate) -> f64 {
    c.ellipse.map(|e| e.b() / e.a()).unwrap_or(0.0)
}

fn pick_one(cands: Vec<Candidate>, reason: String) -> Result<Solution, RuleFailure> {
    let note = cands.first().map(|c| c.note.clone()).unwrap_or_default();
    Solution::new(cands.clone(), 0, reason).ok_or(RuleFailure {
        reason: format!("the member found is not an ellipse inside the bay ({note})"),
        candidates: cands,
    })
}

/// Among the cuttable candidates, the roundest; the error carries the candidates when none is.
fn pick_roundest(
    cands: Vec<Candidate>,
    keep: impl Fn(&Candidate) -> bool,
) -> Result<Solution, Vec<Candidate>> {
    let usable: Vec<usize> = (0..cands.len())
        .filter(|&i| cands[i].cuttable && keep(&cands[i]))
        .collect();
    let Some(roundest) = usable
        .iter()
        .map(|&i| ratio(&cands[i]))
        .max_by(f64::total_cmp)
    else {
        return Err(cands);
    };
    // Equally round members (mirror images in a symmetric bay) tie: take the first listed.
    let tied: Vec<usize> = usable
        .iter()
        .copied()
        .filter(|&i| ratio(&cands[i]) >= roundest * (1.0 - 1e-9))
        .collect();
    let best = tied[0];
    let reason = if usable.len() == 1 {
        "the only member inside the bay that meets the rule".to_string()
    } else if tied.len() > 1 {
        format!(
            "{} members inside the bay meet the rule and {} of them are equally round (mirror \
             images); the first listed is taken",
            usable.len(),
            tied.len()
        )
    } else {
        format!(
            "{} members inside the bay meet the rule; this is the roundest of them (it leaves the \
             most even web to the sides)",
            usable.len()
        )
    };
    Solution::new(cands.clone(), best, reason).ok_or(cands)
}

/// Every real root of `eq(t) = 0` (Cauchy's bound keeps the search finite), as members.
fn all_members(family: &TangentFamily, corners: &[Point], eq: &[f64]) -> Vec<Candidate> {
    let lead = eq
        .iter()
        .rev()
        .find(|c| c.abs() > 0.0)
        .copied()
        .unwrap_or(1.0);
    let bound = 1.0
        + eq.iter()
            .map(|c| (c / lead).abs())
            .fold(0.0, f64::max)
            .min(1e9);
    poly::real_roots_in(eq, -bound, bound)
        .into_iter()
        .map(|t| member(family, t, corners))
        .collect()
}

/// The smallest and largest value of a polynomial on [0, 1] (ends and critical points).
fn range_on_unit(p: &[f64]) -> (f64, f64) {
    let mut xs = vec![0.0, 1.0];
    xs.extend(poly::real_roots_in(&poly::derivative(p), 0.0, 1.0));
    xs.iter()
        .map(|&x| poly::eval(p, x))
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        })
}
