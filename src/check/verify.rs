//! The checker's one entry: everything a written program must satisfy before the job returns it.
//!
//! [`verify`] reads the program back ([`trace`]), finds every cut by the number K of its index
//! comment `(cut K of N: NAME)` ([`super::cut_contour`]), measures each cut's contour against its exact
//! tool-centre path with the checker's own measurement ([`deviation::measure`]), holds it to the
//! tolerance and, for a one-sided job, keeps it off the part side beyond the rounding allowance,
//! and runs the scrap check ([`check_scrap`]) on every move off the contour.

use super::deviation::{self, Deviation};
use super::scrap::{ScrapRules, check_scrap};
use super::{CheckError, Trace, cut_contour_lines};
use crate::plan::PlannedCut;
use rayon::prelude::*;
use serde::Serialize;

/// What [`verify`] holds a program to (lengths in mm).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct VerifyRules {
    /// The largest distance allowed between a written contour and its exact tool-centre path,
    /// either way.
    pub tolerance: f64,
    /// How far the output rounding alone can move a written point.
    pub rounding: f64,
    /// The job asked to keep every deviation on the scrap side: a contour may then reach onto
    /// the part side by the rounding allowance at most.
    pub scrap_side_only: bool,
    /// The tool radius: half the cutter diameter, or half the kerf.
    pub tool_radius: f64,
    /// Laser, plasma, waterjet: the pierce point's least distance from every finished edge;
    /// `None` for mills and routers.
    pub pierce_clearance: Option<f64>,
    /// Mills and routers: the scrap check leaves out points above the top of the stock.
    pub skip_above_stock: bool,
}

/// One cut's contour as written, measured by the checker (mm).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CutDeviation {
    /// The largest distance between the written contour and the exact path, either way.
    pub both_ways: f64,
    /// The largest distance onto the part side.
    pub part_side: f64,
}

/// A program that passed every check, with the figures read back from it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Verified {
    /// Each cut's deviation, in the order of the cuts given.
    pub cuts: Vec<CutDeviation>,
    /// Smallest and largest X, Y, Z the tool centre reaches (mm), arcs included.
    pub bounds: Option<([f64; 3], [f64; 3])>,
    /// Largest difference between an arc's start and end radius (mm).
    pub largest_arc_radius_mismatch: f64,
    /// The rapid travel as written, and the least any order of the cuts could have.
    pub rapids: super::rapids::Rapids,
}

/// One thing wrong with a written program. Each is a bug in conicut, not in the user's input:
/// report it with the drawing; nothing should be written.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum Finding {
    /// The checker cannot read the program.
    #[error("{0}")]
    Unreadable(CheckError),
    /// The text breaks a rule of the reader's ([`super::reader`]).
    #[error("program line {line}: {problem}")]
    TextRule {
        line: usize,
        rule: &'static str,
        problem: String,
    },
    /// No cut comment with the cut's number, or no contour moves after it reach its path.
    #[error("the cut of \"{feature}\" was not found in the program")]
    NotFound { feature: String },
    /// The contour strays from its exact path by more than the tolerance.
    #[error(
        "program line {line}: \"{feature}\" deviates {measured:.6} mm from its exact tool-centre \
         path, more than the tolerance {tolerance} mm; this is a bug, please report it with the \
         drawing"
    )]
    ToleranceExceeded {
        feature: String,
        line: usize,
        measured: f64,
        tolerance: f64,
    },
    /// A one-sided contour reaches onto the part side by more than the rounding allowance.
    #[error(
        "\"{feature}\" reaches {part_side:.6} mm onto the part side, more than the rounding \
         allowance {rounding:.6} mm"
    )]
    OntoPartSide {
        feature: String,
        line: usize,
        part_side: f64,
        rounding: f64,
    },
    /// A move off the contour brings the tool onto the finished part (see [`check_scrap`]).
    #[error(
        "program line {line} ({part} of \"{feature}\") brings the tool centre to ({x:.4}, \
         {y:.4}) mm: {problem}"
    )]
    OffScrap {
        feature: String,
        part: String,
        line: usize,
        x: f64,
        y: f64,
        problem: String,
    },
}

/// Everything [`verify`] found wrong, in program order of the cuts (the scrap check last).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("the program fails {} check(s):\n{}", .0.len(), list(.0))]
pub struct Findings(pub Vec<Finding>);

fn list(findings: &[Finding]) -> String {
    let lines: Vec<String> = findings.iter().map(|f| format!("  - {f}")).collect();
    lines.join("\n")
}

/// Verifies `program` as written for `cuts` (in the order of their index comments) against
/// `rules`: see the module docs. The contour of each cut is looked for within twice the
/// tolerance of its exact start (a fitted start may sit up to the tolerance off it, and rounding
/// moves it a little more). The scrap check runs when every cut was found.
pub fn verify(
    program: &str,
    cuts: &[PlannedCut],
    rules: &VerifyRules,
) -> Result<Verified, Findings> {
    let reading = super::reader::read_program(program, &super::reader::Dialect::default());
    // What the reader could not follow stops here; the text rules broken are listed after the
    // measurement.
    let (unreadable, rules_broken): (Vec<_>, Vec<_>) = reading
        .findings
        .into_iter()
        .filter(|f| f.severity == super::reader::Severity::MustFix)
        .partition(|f| super::reader::UNREADABLE.contains(&f.rule));
    if let Some(f) = unreadable.into_iter().next() {
        return Err(Findings(vec![Finding::Unreadable(CheckError {
            line: f.line,
            problem: f.message,
        })]));
    }
    let trace = reading.trace;
    let mut findings = Vec::new();
    let mut measured = Vec::with_capacity(cuts.len());
    // Measured in parallel (rayon), gathered in cut order.
    let results: Vec<Result<CutDeviation, Vec<Finding>>> = cuts
        .par_iter()
        .enumerate()
        .map(|(k, cut)| measure_cut(&trace, k + 1, cut, rules))
        .collect();
    for result in results {
        match result {
            Ok(m) => measured.push(m),
            Err(mut f) => findings.append(&mut f),
        }
    }
    if findings.is_empty() {
        findings.extend(scrap_finding(&trace, cuts, rules));
    }
    findings.extend(rules_broken.into_iter().map(|f| Finding::TextRule {
        line: f.line,
        rule: f.rule,
        problem: f.message,
    }));
    if !findings.is_empty() {
        return Err(Findings(findings));
    }
    Ok(Verified {
        cuts: measured,
        bounds: trace.bounds,
        largest_arc_radius_mismatch: trace.largest_arc_radius_mismatch,
        rapids: super::rapids::rapids(&trace),
    })
}

/// Measures cut number `number` and holds it to the tolerance and the one-sided rule.
fn measure_cut(
    trace: &Trace,
    number: usize,
    cut: &PlannedCut,
    rules: &VerifyRules,
) -> Result<CutDeviation, Vec<Finding>> {
    let not_found = || {
        vec![Finding::NotFound {
            feature: cut.name().to_string(),
        }]
    };
    let (start, moves, lines) = cut_contour_lines(trace, number, cut.path(), 2.0 * rules.tolerance)
        .ok_or_else(not_found)?;
    let d: Deviation =
        deviation::measure(start, &moves, cut.path(), cut.scrap_left()).ok_or_else(not_found)?;
    let line_of = |i: usize| lines[i];
    let mut found = Vec::new();
    if d.both_ways > rules.tolerance {
        found.push(Finding::ToleranceExceeded {
            feature: cut.name().to_string(),
            line: line_of(d.worst_move),
            measured: d.both_ways,
            tolerance: rules.tolerance,
        });
    }
    if rules.scrap_side_only && d.part_side > rules.rounding {
        found.push(Finding::OntoPartSide {
            feature: cut.name().to_string(),
            line: line_of(d.worst_part_move),
            part_side: d.part_side,
            rounding: rules.rounding,
        });
    }
    if found.is_empty() {
        Ok(CutDeviation {
            both_ways: d.both_ways,
            part_side: d.part_side,
        })
    } else {
        Err(found)
    }
}

/// The scrap check's first violation, if any, as a finding.
fn scrap_finding(trace: &Trace, cuts: &[PlannedCut], rules: &VerifyRules) -> Option<Finding> {
    let scrap = ScrapRules {
        tool_radius: rules.tool_radius,
        tolerance: rules.tolerance,
        rounding: rules.rounding,
        pierce_clearance: rules.pierce_clearance,
        skip_above_stock: rules.skip_above_stock,
    };
    check_scrap(trace, cuts, &scrap)
        .err()
        .map(|v| Finding::OffScrap {
            feature: v.feature,
            part: v.part,
            line: v.line,
            x: v.at.x,
            y: v.at.y,
            problem: v.problem,
        })
}
