//! Solving one feature of a job: a bay and a rule, with an edge margin.

use super::candidate::{Candidate, Solution};
use super::conic::ConicKind;
use super::contained::largest_contained;
use super::quad_family::TangentFamily;
use super::quad_rules::{self, Rule, RuleFailure};
use super::triangle::{steiner_inellipse, tangent_ellipse_with_centre};
use super::{SolveError, ccw_convex_corners, inset_convex_polygon, touch_points};
use crate::chain::Bay;
use crate::geom::Point;
use serde::Serialize;

/// Why a feature has no ellipse to cut, with what was found anyway.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Failure {
    pub reason: String,
    pub candidates: Vec<Candidate>,
}

impl From<SolveError> for Failure {
    fn from(e: SolveError) -> Self {
        Failure {
            reason: e.to_string(),
            candidates: Vec::new(),
        }
    }
}

/// A bay solved by a rule.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BaySolution {
    /// Corners after the margin, counter-clockwise (mm): what the ellipse was solved in.
    pub solved_corners: Vec<Point>,
    pub solution: Solution,
}

/// Solves `bay` by `rule` after moving its sides inward by `margin` (mm).
///
/// | sides | rules |
/// |---|---|
/// | 3 | `largest` and `largest-inside` (the Steiner inellipse), `centre-near` (the one ellipse with exactly that centre) |
/// | 4 | every rule |
/// | 5 | `largest` (the one conic touching all five sides, if it is an ellipse inside the bay), `largest-inside` |
/// | 6 or more | `largest-inside` |
///
/// The bay is solved in coordinates local to it (its first corner at the origin) and the answer
/// moved back, so that a bay far from the drawing's origin keeps every digit the bay near it
/// would (the closed forms subtract coordinates of the size of the bay's distance from the
/// origin otherwise). A bay with no answer is solved again where it lies, so that the places
/// its message names are the drawing's.
pub fn solve_bay(bay: &Bay, rule: &Rule, margin: f64) -> Result<BaySolution, Failure> {
    let Some(shift) = bay
        .corners()
        .first()
        .map(|p| p.to_vec())
        .filter(|v| v.x.is_finite() && v.y.is_finite())
    else {
        return solve_in_place(bay.name(), bay.corners(), rule, margin);
    };
    let local: Vec<Point> = bay.corners().iter().map(|p| *p - shift).collect();
    let local_rule = match rule {
        Rule::CentreNear(p) => Rule::CentreNear(*p - shift),
        other => *other,
    };
    match solve_in_place(bay.name(), &local, &local_rule, margin) {
        Ok(s) => Ok(BaySolution {
            solved_corners: s.solved_corners.iter().map(|p| *p + shift).collect(),
            solution: s.solution.translated(shift),
        }),
        Err(_) => solve_in_place(bay.name(), bay.corners(), rule, margin),
    }
}

/// [`solve_bay`] on the corners as given.
fn solve_in_place(
    name: &str,
    corners: &[Point],
    rule: &Rule,
    margin: f64,
) -> Result<BaySolution, Failure> {
    if !(margin >= 0.0 && margin.is_finite()) {
        return Err(Failure {
            reason: format!("the edge margin must be zero or positive (got {margin})"),
            candidates: vec![],
        });
    }
    let corners = ccw_convex_corners(name, corners)?;
    let corners = if margin > 0.0 {
        inset_convex_polygon(name, &corners, margin)?
    } else {
        corners
    };
    let n = corners.len();
    let unsupported = |what: &str| Failure {
        reason: format!("{}: rule \"{}\" {what}", name, rule.describe()),
        candidates: vec![],
    };
    let solution = match (n, rule) {
        (_, Rule::LargestInside) => largest_inside(&corners)?,
        (3, Rule::Largest) => {
            let t = [corners[0], corners[1], corners[2]];
            let e = steiner_inellipse(t).map_err(|e| unsupported(&e.to_string()))?;
            single(
                ellipse_candidate(
                    e,
                    &corners,
                    "the Steiner inellipse: touches every side at its midpoint",
                ),
                "the largest ellipse in a triangle is its Steiner inellipse".into(),
            )?
        }
        (3, Rule::CentreNear(c)) => {
            let t = [corners[0], corners[1], corners[2]];
            let e = tangent_ellipse_with_centre(t, *c).map_err(|e| Failure {
                reason: format!("{}: {e}", name),
                candidates: vec![],
            })?;
            single(
                ellipse_candidate(e, &corners, "touches all three sides"),
                "in a three-sided bay one tangent ellipse has each centre inside the triangle of the side midpoints".into(),
            )?
        }
        (3, _) => {
            return Err(unsupported(
                "needs a four-sided bay; in a three-sided bay use largest, largest-inside or centre-near",
            ));
        }
        (4, _) => {
            let q = [corners[0], corners[1], corners[2], corners[3]];
            let family = TangentFamily::new(q);
            quad_rules::choose(&family, &corners, rule).map_err(
                |RuleFailure { reason, candidates }| Failure {
                    reason: format!("{}: {reason}", name),
                    candidates,
                },
            )?
        }
        (5, Rule::Largest) => five_sided(name, &corners)?,
        (5, _) => {
            return Err(unsupported(
                "needs a four-sided bay; in a five-sided bay use largest (the one ellipse touching all five sides) or largest-inside",
            ));
        }
        (_, _) => {
            return Err(unsupported(&format!(
                "needs a bay of three to five sides; this one has {n}: use largest-inside"
            )));
        }
    };
    Ok(BaySolution {
        solved_corners: corners,
        solution,
    })
}

fn ellipse_candidate(e: crate::geom::Ellipse, corners: &[Point], note: &str) -> Candidate {
    let circle = (e.a() - e.b()) <= 1e-9 * e.a();
    Candidate {
        kind: if circle {
            ConicKind::Circle
        } else {
            ConicKind::Ellipse
        },
        ellipse: Some(e),
        parameter: None,
        cuttable: true,
        note: note.to_string(),
        residual: touch_points(&e, corners).1,
    }
}

fn single(c: Candidate, reason: String) -> Result<Solution, Failure> {
    Solution::new(vec![c.clone()], 0, reason).ok_or(Failure {
        reason: "the solution is not a cuttable ellipse".into(),
        candidates: vec![c],
    })
}

fn largest_inside(corners: &[Point]) -> Result<Solution, Failure> {
    let most = super::john::MOST_SIDES;
    if corners.len() > most {
        return Err(Failure {
            reason: format!(
                "the bay has {} sides; the largest ellipse inside is found for bays of up to \
                 {most} sides. Draw the bay with fewer, longer sides",
                corners.len()
            ),
            candidates: vec![],
        });
    }
    let c = largest_contained(corners).ok_or(Failure {
        reason: "no ellipse fits inside the bay".into(),
        candidates: vec![],
    })?;
    let sides: Vec<String> = c.touching.iter().map(|i| (i + 1).to_string()).collect();
    let r = c.residuals;
    let mut cand = ellipse_candidate(
        c.ellipse,
        corners,
        &format!(
            "touches sides {} of {}; {}, optimality residual {:.1e} (John's conditions), \
             least weight {:.3}",
            sides.join(", "),
            corners.len(),
            if r.polished {
                "exact on those sides"
            } else {
                "the convex program's answer (no exact polish fitted)"
            },
            r.optimality,
            r.least_weight
        ),
    );
    // The residual of the sides it touches (the others are clear by construction).
    cand.residual = c
        .touching
        .iter()
        .map(|&i| {
            let pair = [corners[i], corners[(i + 1) % corners.len()]];
            touch_points(&c.ellipse, &pair).1
        })
        .fold(0.0, f64::max);
    single(
        cand,
        "the largest ellipse inside the bay (its John ellipse, touching three, four or five \
         sides: a convex program solved to convergence, then exact on the sides it touches)"
            .into(),
    )
}

/// The one conic touching the five sides of a convex pentagon, cut only if it is an ellipse
/// inside the bay.
fn five_sided(name: &str, corners: &[Point]) -> Result<Solution, Failure> {
    let e = super::pentagon::tangent_conic(corners).map_err(|reason| Failure {
        reason: format!("{name}: {reason}"),
        candidates: vec![],
    })?;
    let mut c = ellipse_candidate(e, corners, "the one conic touching all five sides");
    if !super::contained::lies_inside(&e, corners) {
        c.cuttable = false;
        c.note = "touches the five side lines but reaches outside the bay".into();
        return Err(Failure {
            reason: format!(
                "{name}: the one ellipse touching all five side lines lies partly outside the bay \
                 (it touches a side's extension); use rule largest-inside"
            ),
            candidates: vec![c],
        });
    }
    single(c, "five sides fix one conic".into())
}
