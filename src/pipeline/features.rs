//! Solving every feature a job asks for: from the job file's specs (or, without one, the largest
//! ellipse in every bay), against the drawing's bays, points and lines.

use crate::chain::{Bay, Part};
use crate::geom::{Bounds, BoxGrid, Line, Point};
use crate::read::{Drawing, EntityKind};
use crate::settings::job_file::{
    BaySelect, CutKind, FeatureSource, FeatureSpec, FitMethod, FitPoints, LineSource, PointSource,
    Rule,
};
use crate::solve::conics_through_and_tangent;
use crate::solve::{Candidate, Solution};
use crate::solve::{Failure, solve_bay};
use crate::solve::{geometric_fit, least_squares_ellipse};
use serde::Serialize;
use std::collections::{BTreeMap, HashMap};

/// How well the least-squares fit cut matches its points.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FitQuality {
    /// The points the fit used (outliers rejected left out).
    pub points: usize,
    /// Whether it is the geometric fit (otherwise the algebraic one).
    pub geometric: bool,
    /// How many points were rejected as outliers.
    pub rejected: usize,
    /// Root-mean-square geometric distance of the points from the fitted ellipse (mm).
    pub rms_residual_mm: f64,
    /// Largest geometric distance of a point from the fitted ellipse (mm).
    pub max_residual_mm: f64,
}

/// One feature, solved or not.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SolvedFeature {
    pub name: String,
    /// Where the ellipse comes from, in words: `bay 2 (4 sides)`, `3 points and 2 lines`, `fit to
    /// 20 points`.
    pub source: String,
    /// The bay used (bay features), by its name in the drawing.
    pub bay: Option<String>,
    /// The rule in words (bay features).
    pub rule: Option<String>,
    /// Edge margin used (bay features, mm).
    pub margin_mm: Option<f64>,
    pub cut: CutKind,
    /// The feature's own depth, passes and feeds, if its spec gives them.
    pub own: crate::plan::OwnSettings,
    /// The bay's corners after the margin (bay features, mm).
    pub solved_corners: Option<Vec<Point>>,
    pub fit: Option<FitQuality>,
    pub outcome: Result<Solution, Failure>,
}

/// The specs a job without a job file means: the largest ellipse touching every side of every
/// bay, cut as a hole.
pub fn default_specs(part: &Part) -> Vec<FeatureSpec> {
    part.bays
        .iter()
        .map(|b| FeatureSpec {
            name: b.name().to_string(),
            line: 0,
            source: FeatureSource::Bay {
                select: BaySelect::Name(b.name().to_string()),
                rule: Rule::Largest,
            },
            cut: CutKind::Hole,
            margin: None,
            depth: None,
            stepdown: None,
            feed: None,
            plunge_feed: None,
            spindle_speed: None,
        })
        .collect()
}

/// Inputs the features are solved against.
pub struct FeatureInputs<'a> {
    pub part: &'a Part,
    pub drawing: &'a Drawing,
    /// Points read from the CSV files the job names, by the path as written in the job file (mm).
    pub csv_points: &'a BTreeMap<String, Vec<Point>>,
    /// Margin for bay features that state none (mm).
    pub default_margin: f64,
}

/// Solves every spec. A spec that cannot be solved gives a [`Failure`] with the reason; the
/// others are still solved, so that a listing shows everything at once.
pub fn solve_features(specs: &[FeatureSpec], inputs: &FeatureInputs) -> Vec<SolvedFeature> {
    let bays = BayLookup::of(inputs.part);
    specs.iter().map(|s| solve_one(s, inputs, &bays)).collect()
}

/// The part's bays by name (ignoring ASCII case; the first of a name) and on a grid by their
/// boxes, so that finding a feature's bay does not scan every bay.
struct BayLookup {
    by_name: HashMap<String, usize>,
    grid: BoxGrid,
}

impl BayLookup {
    fn of(part: &Part) -> Self {
        let mut by_name = HashMap::with_capacity(part.bays.len());
        for (i, b) in part.bays.iter().enumerate() {
            by_name.entry(b.name().to_ascii_lowercase()).or_insert(i);
        }
        let boxes = part
            .bays
            .iter()
            .map(|b| {
                Bounds::of_points(b.corners()).unwrap_or(Bounds {
                    min: Point::new(f64::NAN, f64::NAN),
                    max: Point::new(f64::NAN, f64::NAN),
                })
            })
            .collect();
        BayLookup {
            by_name,
            grid: BoxGrid::new(boxes),
        }
    }
}

fn failure(reason: String) -> Failure {
    Failure {
        reason,
        candidates: Vec::new(),
    }
}

fn solve_one(spec: &FeatureSpec, inputs: &FeatureInputs, bays: &BayLookup) -> SolvedFeature {
    let mut out = SolvedFeature {
        name: spec.name.clone(),
        source: String::new(),
        bay: None,
        rule: None,
        margin_mm: None,
        cut: spec.cut,
        own: crate::plan::OwnSettings {
            depth: spec.depth,
            stepdown: spec.stepdown,
            feed: spec.feed,
            plunge_feed: spec.plunge_feed,
            spindle_speed: spec.spindle_speed,
        },
        solved_corners: None,
        fit: None,
        outcome: Err(failure(String::new())),
    };
    match &spec.source {
        FeatureSource::Bay { select, rule } => {
            let margin = spec.margin.unwrap_or(inputs.default_margin);
            bay_feature(&mut out, inputs, bays, select, rule, margin);
        }
        FeatureSource::Constraints {
            through,
            touching,
            choose,
        } => constraints_feature(&mut out, inputs, through, touching, *choose),
        FeatureSource::Fit {
            points,
            method,
            reject_outliers,
        } => fit_feature(&mut out, inputs, points, *method, *reject_outliers),
    }
    out
}

/// A bay and a rule, the bay's sides moved in by `margin`.
fn bay_feature(
    out: &mut SolvedFeature,
    inputs: &FeatureInputs,
    bays: &BayLookup,
    select: &BaySelect,
    rule: &Rule,
    margin: f64,
) {
    out.rule = Some(rule.describe());
    out.margin_mm = Some(margin);
    out.outcome = find_bay(inputs.part, bays, select).and_then(|bay| {
        out.source = format!("{} ({} sides)", bay.name(), bay.corners().len());
        out.bay = Some(bay.name().to_string());
        solve_bay(bay, rule, margin).map(|s| {
            out.solved_corners = Some(s.solved_corners);
            s.solution
        })
    });
    if out.source.is_empty() {
        out.source = describe_select(select);
    }
}

/// Five points and lines, from the job file or the drawing's layers.
fn constraints_feature(
    out: &mut SolvedFeature,
    inputs: &FeatureInputs,
    through: &PointSource,
    touching: &LineSource,
    choose: Option<usize>,
) {
    let points = match through {
        PointSource::Given(p) => Ok(p.clone()),
        PointSource::Layer(layer) => layer_points(inputs.drawing, layer),
    };
    let lines = match touching {
        LineSource::Given(l) => l
            .iter()
            .map(|&(p, q)| match Line::through(p, q) {
                Some(_) => Ok((p, q)),
                None => Err(format!(
                    "a line to touch is given by two equal points ({:.3}, {:.3})",
                    p.x, p.y
                )),
            })
            .collect(),
        LineSource::Layer(layer) => layer_lines(inputs.drawing, layer),
    };
    out.outcome = match (points, lines) {
        (Ok(p), Ok(l)) => {
            out.source = format!(
                "{} point{} and {} line{}",
                p.len(),
                if p.len() == 1 { "" } else { "s" },
                l.len(),
                if l.len() == 1 { "" } else { "s" }
            );
            solve_constraints(&p, &l, choose)
        }
        (Err(e), _) | (_, Err(e)) => Err(failure(e)),
    };
    if out.source.is_empty() {
        out.source = "points and lines".into();
    }
}

/// A least-squares fit to measured points (a CSV the job names, or a layer).
fn fit_feature(
    out: &mut SolvedFeature,
    inputs: &FeatureInputs,
    points: &FitPoints,
    method: FitMethod,
    reject_outliers: bool,
) {
    let pts = match points {
        FitPoints::Csv(path) => inputs
            .csv_points
            .get(path)
            .cloned()
            .ok_or_else(|| format!("the points file {path} was not read")),
        FitPoints::Layer(layer) => layer_points(inputs.drawing, layer),
    };
    out.source = match &pts {
        Ok(p) => format!("fit to {} points", p.len()),
        Err(_) => "fit to measured points".into(),
    };
    out.outcome = pts.map_err(failure).and_then(|p| {
        let algebraic = least_squares_ellipse(&p).map_err(|e| failure(e.to_string()))?;
        let geometric = geometric_fit(&p, &algebraic.ellipse, reject_outliers);
        let kind = |e: &crate::geom::Ellipse| {
            if (e.a() - e.b()) <= 1e-9 * e.a() {
                crate::solve::ConicKind::Circle
            } else {
                crate::solve::ConicKind::Ellipse
            }
        };
        let rejected = if geometric.rejected.is_empty() {
            String::new()
        } else {
            let list: Vec<String> = geometric
                .rejected
                .iter()
                .map(|i| (i + 1).to_string())
                .collect();
            format!(
                "; point{} {} (counting from 1) rejected as outlier{} (farther than the median \
                 distance by over 3 scaled median absolute deviations)",
                if list.len() == 1 { "" } else { "s" },
                list.join(", "),
                if list.len() == 1 { "" } else { "s" }
            )
        };
        let candidates = vec![
            Candidate {
                kind: kind(&geometric.ellipse),
                ellipse: Some(geometric.ellipse),
                parameter: None,
                cuttable: true,
                note: format!(
                    "geometric fit (least squared orthogonal distances): RMS distance {:.4} mm, \
                     largest {:.4} mm{rejected}{}",
                    geometric.rms_distance,
                    geometric.max_distance,
                    if geometric.converged {
                        ""
                    } else {
                        "; the search stopped at its step limit: the points fix the ellipse \
                         poorly (measure more of its curve)"
                    }
                ),
                residual: geometric.max_distance,
            },
            Candidate {
                kind: kind(&algebraic.ellipse),
                ellipse: Some(algebraic.ellipse),
                parameter: None,
                cuttable: true,
                note: format!(
                    "algebraic fit (direct, Halíř–Flusser): RMS distance {:.4} mm, largest {:.4} \
                     mm",
                    algebraic.rms_residual, algebraic.max_residual
                ),
                residual: algebraic.max_residual,
            },
        ];
        let (chosen, reason) = match method {
            FitMethod::Geometric => (
                0,
                "the geometric least-squares ellipse: the least sum of squared distances from \
                 the points (Levenberg–Marquardt from the algebraic fit, listed second)",
            ),
            FitMethod::Algebraic => (
                1,
                "the direct algebraic least-squares fit (Halíř–Flusser), as the job file asks \
                 (`fit = \"algebraic\"`)",
            ),
        };
        out.fit = Some(match method {
            FitMethod::Geometric => FitQuality {
                points: p.len() - geometric.rejected.len(),
                rms_residual_mm: geometric.rms_distance,
                max_residual_mm: geometric.max_distance,
                geometric: true,
                rejected: geometric.rejected.len(),
            },
            FitMethod::Algebraic => FitQuality {
                points: algebraic.points,
                rms_residual_mm: algebraic.rms_residual,
                max_residual_mm: algebraic.max_residual,
                geometric: false,
                rejected: 0,
            },
        });
        Solution::new(candidates, chosen, reason.into())
            .ok_or_else(|| failure("the fit gave no ellipse".into()))
    });
}

fn describe_select(select: &BaySelect) -> String {
    match select {
        BaySelect::Name(n) => n.clone(),
        BaySelect::Inside(p) => format!("the bay around ({:.3}, {:.3})", p.x, p.y),
    }
}

fn find_bay<'a>(part: &'a Part, bays: &BayLookup, select: &BaySelect) -> Result<&'a Bay, Failure> {
    let names = || {
        let all: Vec<&str> = part.bays.iter().map(|b| b.name()).collect();
        if all.is_empty() {
            "the drawing has no bays".to_string()
        } else {
            format!("the drawing's bays are {}", all.join(", "))
        }
    };
    match select {
        BaySelect::Name(n) => bays
            .by_name
            .get(&n.to_ascii_lowercase())
            .map(|&i| &part.bays[i])
            .ok_or_else(|| failure(format!("there is no bay named \"{n}\"; {}", names()))),
        BaySelect::Inside(p) => {
            let mut near = Vec::new();
            bays.grid.overlapping(&Bounds::at(*p), &mut near);
            let hits: Vec<&Bay> = near
                .iter()
                .map(|&i| &part.bays[i])
                .filter(|b| inside(b.corners(), *p))
                .collect();
            match hits.as_slice() {
                [one] => Ok(one),
                [] => Err(failure(format!(
                    "no bay contains the point ({:.3}, {:.3}) mm; {}",
                    p.x,
                    p.y,
                    names()
                ))),
                _ => Err(failure(format!(
                    "several bays contain the point ({:.3}, {:.3}) mm; name the bay instead",
                    p.x, p.y
                ))),
            }
        }
    }
}

/// Whether `p` lies inside the polygon (crossing number).
fn inside(corners: &[Point], p: Point) -> bool {
    let n = corners.len();
    let mut c = false;
    for i in 0..n {
        let (a, b) = (corners[i], corners[(i + 1) % n]);
        if (a.y > p.y) != (b.y > p.y) {
            let x = a.x + (p.y - a.y) / (b.y - a.y) * (b.x - a.x);
            if p.x < x {
                c = !c;
            }
        }
    }
    c
}

fn layer_points(d: &Drawing, layer: &str) -> Result<Vec<Point>, String> {
    let pts: Vec<Point> = d
        .entities
        .iter()
        .filter(|e| e.layer.eq_ignore_ascii_case(layer))
        .filter_map(|e| match e.kind {
            EntityKind::Point(p) => Some(p),
            _ => None,
        })
        .collect();
    if pts.is_empty() {
        Err(format!("layer \"{layer}\" holds no POINT entities"))
    } else {
        Ok(pts)
    }
}

/// The LINE entities on `layer`, each as two points on it (zero-length ones left out).
fn layer_lines(d: &Drawing, layer: &str) -> Result<Vec<(Point, Point)>, String> {
    let lines: Vec<(Point, Point)> = d
        .entities
        .iter()
        .filter(|e| e.layer.eq_ignore_ascii_case(layer))
        .filter_map(|e| match e.kind {
            EntityKind::Line(s) => s.line().map(|_| (s.start, s.end)),
            _ => None,
        })
        .collect();
    if lines.is_empty() {
        Err(format!("layer \"{layer}\" holds no LINE entities"))
    } else {
        Ok(lines)
    }
}

/// The conics through the points and touching the lines (each through two points); picks the
/// ellipse to cut by `choose` (1-based, as listed), or the only ellipse when there is exactly
/// one.
///
/// Solved with the first point (or the first line's first point) moved to the origin and the
/// answer moved back: a line is held as `n·x = c`, and written 10 km from the origin its `c`
/// would carry rounding of that size, so the lines are made only after the move. Constraints
/// with no answer are solved again where they lie, so that the places a message names are the
/// drawing's.
fn solve_constraints(
    points: &[Point],
    segments: &[(Point, Point)],
    choose: Option<usize>,
) -> Result<Solution, Failure> {
    let origin = points
        .first()
        .copied()
        .or(segments.first().map(|s| s.0))
        .filter(|p| p.is_finite());
    if let Some(o) = origin {
        let shift = o.to_vec();
        let local: Vec<Point> = points.iter().map(|p| *p - shift).collect();
        let local_segments: Vec<(Point, Point)> = segments
            .iter()
            .map(|(p, q)| (*p - shift, *q - shift))
            .collect();
        if let Ok(s) = solve_constraints_here(&local, &local_segments, choose) {
            return Ok(s.translated(shift));
        }
    }
    solve_constraints_here(points, segments, choose)
}

/// [`solve_constraints`] where the constraints lie.
fn solve_constraints_here(
    points: &[Point],
    segments: &[(Point, Point)],
    choose: Option<usize>,
) -> Result<Solution, Failure> {
    let lines: Vec<Line> = segments
        .iter()
        .filter_map(|(p, q)| Line::through(*p, *q))
        .collect();
    let lines = lines.as_slice();
    let sols = conics_through_and_tangent(points, lines).map_err(|e| failure(e.to_string()))?;
    let candidates: Vec<Candidate> = sols
        .iter()
        .map(|s| {
            let ellipse = s.ellipse.ok();
            Candidate {
                kind: s.kind,
                ellipse,
                parameter: None,
                cuttable: ellipse.is_some(),
                note: match &s.ellipse {
                    Ok(_) => "passes through the points and touches the lines".to_string(),
                    Err(e) => format!("not cut: {e}"),
                },
                residual: s.point_residual.max(s.tangency_residual),
            }
        })
        .collect();
    let cuttable: Vec<usize> = (0..candidates.len())
        .filter(|&i| candidates[i].cuttable)
        .collect();
    let pick = match (choose, cuttable.as_slice()) {
        (Some(k), _) => {
            let i = k.wrapping_sub(1);
            match candidates.get(i) {
                Some(c) if c.cuttable => Ok((i, format!("solution {k}, as the job file chooses"))),
                Some(c) => Err(format!(
                    "the job file chooses solution {k}, which is a {} and cannot be cut",
                    c.kind
                )),
                None => Err(format!(
                    "the job file chooses solution {k}, but there are only {}",
                    candidates.len()
                )),
            }
        }
        (None, [one]) => Ok((
            *one,
            "the only ellipse that meets the constraints".to_string(),
        )),
        (None, []) => Err(format!(
            "none of the {} conic(s) through the points and touching the lines is an ellipse",
            candidates.len()
        )),
        (None, several) => Err(format!(
            "{} ellipses meet these constraints; say which to cut with `choose = N` in the job \
             file (run `conicut solve` to list them)",
            several.len()
        )),
    };
    match pick {
        Ok((i, why)) => Solution::new(candidates.clone(), i, why).ok_or(Failure {
            reason: "the chosen solution is not an ellipse".into(),
            candidates,
        }),
        Err(reason) => Err(Failure { reason, candidates }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::Vec2;

    /// Three points and two tilted lines (each through two points), all on whole millimetres,
    /// solved where they are and 10 km away: the same ellipses, moved. Held as `n·x = c`, a
    /// tilted line written 10 km out has its `c` rounded by about 1e-9 mm, which moved the
    /// answer by about that much before the lines were made after the move to the origin.
    #[test]
    fn tilted_lines_far_away_give_the_same_ellipses() {
        let points = [
            Point::new(1.0, 7.0),
            Point::new(8.0, 1.0),
            Point::new(9.0, 8.0),
        ];
        let segments = [
            (Point::new(-1.0, -3.0), Point::new(1.0, 13.0)),
            (Point::new(-2.0, 1.0), Point::new(12.0, -3.0)),
        ];
        let shift = Vec2::new(9_999_991.0, -7_654_321.0);
        let far_points: Vec<Point> = points.iter().map(|p| *p + shift).collect();
        let far_segments: Vec<(Point, Point)> = segments
            .iter()
            .map(|(p, q)| (*p + shift, *q + shift))
            .collect();
        let here = solve_constraints(&points, &segments, Some(1)).unwrap();
        let there = solve_constraints(&far_points, &far_segments, Some(1)).unwrap();
        assert_eq!(here.candidates().len(), there.candidates().len());
        let mut compared = 0;
        for (h, t) in here.candidates().iter().zip(there.candidates()) {
            let (Some(h), Some(t)) = (h.ellipse, t.ellipse) else {
                continue;
            };
            compared += 1;
            assert!((t.a() / h.a() - 1.0).abs() < 1e-12, "{h:?} {t:?}");
            assert!((t.b() / h.b() - 1.0).abs() < 1e-12, "{h:?} {t:?}");
            let off = (t.centre() - shift).distance(h.centre());
            assert!(off < 1e-12 * h.a() + 8.0 * f64::EPSILON * 1e7, "{off}");
        }
        assert!(compared >= 2, "{compared}");
    }
}
