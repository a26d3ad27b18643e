//! The report: what was solved and cut, measured, for people (text) and for scripts (JSON).
//!
//! The JSON keys are documented in `README.md`; keep the two in step.

use crate::fit::FittedCut;
use crate::plan::{CutSide, FeatureKind};
use serde::Serialize;
use std::fmt::Write as _;

/// The ellipse of a feature, in report units (mm, degrees).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EllipseSummary {
    #[serde(rename = "center_mm")]
    pub centre_mm: [f64; 2],
    pub semi_major_mm: f64,
    pub semi_minor_mm: f64,
    /// Direction of the major axis, degrees counter-clockwise from +X, in (−90, 90].
    pub angle_deg: f64,
    pub area_mm2: f64,
}

/// One cut feature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FeatureReport {
    pub name: String,
    pub kind: FeatureKind,
    pub cut_side: CutSide,
    /// The solved ellipse, for openings and bosses (and elliptical holes).
    pub ellipse: Option<EllipseSummary>,
    /// Where the ellipse came from, in words (e.g. `bay 2 (4 sides)`, `fit to 20 points`).
    pub source: Option<String>,
    /// The rule that picked it, in words (bay features).
    pub rule: Option<String>,
    /// Why this ellipse and not another of the candidates.
    pub chosen_because: Option<String>,
    /// How many candidates the rule or constraints admitted (listed by `conicut solve`).
    pub candidates: Option<usize>,
    /// Edge margin used when solving (mm), for bay features.
    pub margin_mm: Option<f64>,
    /// Largest relative residual of the solved ellipse against its constraints (tangency to the
    /// bay's moved sides, or passing through points); for a fit, the largest distance (mm).
    pub residual: Option<f64>,
    /// For a least-squares fit: how well it matches its points.
    pub fit: Option<FitSummary>,
    /// Where the tool enters the material.
    pub plunge_mm: [f64; 2],
    /// Straight feed moves along the contour (not counting the move in from the plunge point).
    pub contour_moves: usize,
    pub path_length_mm: f64,
    /// Largest distance between the emitted moves and the exact tool-centre curve (mm).
    pub measured_deviation_mm: f64,
    /// The largest distance onto the part side (right of travel) alone (mm).
    pub part_side_deviation_mm: f64,
    /// The largest change of direction between consecutive moves (degrees).
    pub largest_kink_deg: f64,
    pub tolerance_mm: f64,
    /// Stretches of the contour left uncut (tabs, micro-joints), in order along it; empty for
    /// none.
    pub tabs: Vec<TabReport>,
}

/// One tab: a stretch of the tool-centre path over which the tool does not cut.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TabReport {
    /// Where the stretch starts and ends, in mm along the contour from its start.
    pub from_mm: f64,
    pub to_mm: f64,
    /// The stretch's middle on the tool-centre path (mm).
    pub middle_mm: [f64; 2],
    /// The bridge left between the part and the scrap: the stretch less the tool diameter
    /// (kerf width), measured along the middle of the cut (mm).
    pub bridge_mm: f64,
}

/// How well a least-squares fit matches its points (mm).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FitSummary {
    /// The points the fit used (outliers rejected left out).
    pub points: usize,
    /// Whether the geometric fit was cut (otherwise the algebraic one).
    pub geometric: bool,
    /// Points rejected as outliers.
    pub rejected: usize,
    pub rms_residual_mm: f64,
    pub max_residual_mm: f64,
}

/// What the solve stage says of one feature, for the report.
#[derive(Debug, Clone, PartialEq)]
pub struct SolvedInfo {
    pub name: String,
    pub ellipse: crate::geom::Ellipse,
    pub source: String,
    pub rule: Option<String>,
    pub chosen_because: String,
    pub candidates: usize,
    pub margin_mm: Option<f64>,
    pub residual: f64,
    pub fit: Option<FitSummary>,
}

/// Everything the report says.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Report {
    pub conicut_version: String,
    pub drawing: String,
    pub drawing_units: String,
    pub machine: String,
    /// `mill`, `router`, `laser`, `plasma` or `waterjet`.
    pub machine_kind: String,
    /// Tool diameter (mills, routers) or kerf width (laser, plasma, waterjet) the paths allow
    /// for.
    pub tool_diameter_mm: f64,
    /// Depth below the work zero; 0 for the kinds that cut through.
    pub cut_depth_mm: f64,
    pub tolerance_mm: f64,
    pub features: Vec<FeatureReport>,
    /// Output files by role (`program`, `preview`, `report_text`, `report_json`); filled in by
    /// the command layer.
    pub files: Vec<OutputFile>,
    pub warnings: Vec<String>,
    pub notes: Vec<String>,
    /// Every layer that holds entities, with its role (`cut`, `bays`, `construction`,
    /// `not-cut`), why it is not cut, and how many entities it holds.
    pub layers: Vec<crate::chain::LayerUse>,
    /// Smallest and largest X, Y, Z the program's tool centre reaches (mm), read back from the
    /// program.
    pub program_bounds_mm: Option<ProgramBounds>,
    /// Largest difference between an arc's start and end radius in the program (mm).
    pub largest_arc_radius_mismatch_mm: f64,
    /// The program's rapid travel in XY, read back (mm), and the least any order of the cuts
    /// could have.
    pub rapids: Option<RapidReport>,
    /// Mills and routers: the height of tabs above the floor of the cut (mm); `None` when there
    /// are no tabs or they are gaps (laser, plasma, waterjet).
    pub tab_height_mm: Option<f64>,
    /// Where the program's X0 Y0 is on the drawing. Every coordinate in this report (centres,
    /// plunge points, tabs, the program's box) is a program coordinate: the drawing coordinate
    /// plus `shift_mm`.
    pub work_zero: WorkZeroReport,
    /// How long the program runs, estimated from the program read back (`check::time`).
    pub cycle_time: Option<crate::check::time::CycleTime>,
}

/// The work zero: the rule asked for, the drawing point that is X0 Y0, and the shift.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WorkZeroReport {
    /// `drawing`, `lower-left`, `lower-right`, `upper-left`, `upper-right`, `centre`, or `X,Y`.
    pub rule: String,
    /// Where X0 Y0 is, in words.
    pub description: String,
    /// The drawing point that is X0 Y0 (mm).
    pub drawing_point_mm: [f64; 2],
    /// Program coordinates are drawing coordinates plus this (mm).
    pub shift_mm: [f64; 2],
}

/// The box the tool centre stays in (mm).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ProgramBounds {
    pub min: [f64; 3],
    pub max: [f64; 3],
}

/// One output file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OutputFile {
    pub role: String,
    pub path: String,
    /// Whether a file of an earlier run (or, with `--force`, any file) was under that name and
    /// was replaced.
    pub replaced: bool,
}

/// What the report is built from.
pub struct ReportInput<'a> {
    pub drawing: &'a str,
    pub drawing_units: &'a str,
    pub machine: &'a str,
    pub machine_kind: &'a str,
    pub tool_diameter: f64,
    pub cut_depth: f64,
    pub tolerance: f64,
    pub solved: &'a [SolvedInfo],
    pub ellipse_holes: &'a [(String, crate::geom::Ellipse)],
    pub cuts: &'a [FittedCut],
    pub warnings: Vec<String>,
    pub notes: Vec<String>,
    /// Every layer with entities and what it was used for.
    pub layers: &'a [crate::chain::LayerUse],
    pub program_bounds: Option<([f64; 3], [f64; 3])>,
    pub largest_arc_radius_mismatch: f64,
    pub rapids: Option<crate::check::rapids::Rapids>,
    /// Mills and routers with tabs: their height above the floor (mm).
    pub tab_height: Option<f64>,
    /// Where the program's X0 Y0 is on the drawing.
    pub work_zero: &'a crate::plan::PlacedZero,
    pub cycle_time: Option<crate::check::time::CycleTime>,
}

fn summary(e: &crate::geom::Ellipse) -> EllipseSummary {
    EllipseSummary {
        centre_mm: [e.centre().x, e.centre().y],
        semi_major_mm: e.a(),
        semi_minor_mm: e.b(),
        angle_deg: e.angle().to_degrees(),
        area_mm2: e.area(),
    }
}

/// The tabs of `c` for the report: each span, its middle on the path, and the bridge it leaves
/// with a tool of diameter `d`.
fn tab_reports(c: &FittedCut, d: f64) -> Vec<TabReport> {
    c.tabs
        .iter()
        .map(|&(from, to)| {
            let mid = 0.5 * (from + to);
            let middle = crate::geom::moves::leading_stretch(c.start, &c.moves, mid)
                .last()
                .map_or(c.start, crate::geom::Move::end);
            TabReport {
                from_mm: from,
                to_mm: to,
                middle_mm: [middle.x, middle.y],
                bridge_mm: (to - from - d).max(0.0),
            }
        })
        .collect()
}

/// The program's rapid travel (see `check::rapids`), in mm.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RapidReport {
    /// The XY length of every rapid move, read back from the program.
    pub length_mm: f64,
    /// The minimum spanning tree of the work zero and the cuts' pierce points.
    pub pierce_tree_mm: f64,
    /// No order of the cuts has shorter rapids than this.
    pub lower_bound_mm: f64,
}

/// Builds the report from the stages' results.
pub fn build_report(input: ReportInput) -> Report {
    // Each cut's solved feature and drawn ellipse, by name (the first of a name, as a scan
    // would find).
    let mut solved_by_name = std::collections::HashMap::new();
    for o in input.solved {
        solved_by_name.entry(o.name.as_str()).or_insert(o);
    }
    let mut holes_by_name = std::collections::HashMap::new();
    for (n, e) in input.ellipse_holes {
        holes_by_name.entry(n.as_str()).or_insert(e);
    }
    let features = input
        .cuts
        .iter()
        .map(|c| {
            let info = solved_by_name.get(c.name.as_str()).copied();
            let ellipse = info
                .map(|o| summary(&o.ellipse))
                .or_else(|| holes_by_name.get(c.name.as_str()).map(|e| summary(e)));
            FeatureReport {
                name: c.name.clone(),
                kind: c.kind,
                cut_side: c.side,
                ellipse,
                source: info.map(|o| o.source.clone()),
                rule: info.and_then(|o| o.rule.clone()),
                chosen_because: info.map(|o| o.chosen_because.clone()),
                candidates: info.map(|o| o.candidates),
                margin_mm: info.and_then(|o| o.margin_mm),
                residual: info.map(|o| o.residual),
                fit: info.and_then(|o| o.fit),
                plunge_mm: [c.plunge.x, c.plunge.y],
                contour_moves: c.moves.len(),
                path_length_mm: crate::geom::moves::total_length(c.start, &c.moves),
                measured_deviation_mm: c.measured_deviation,
                part_side_deviation_mm: c.part_side_deviation,
                largest_kink_deg: c.largest_kink_deg,
                tolerance_mm: c.tolerance,
                tabs: tab_reports(c, input.tool_diameter),
            }
        })
        .collect();
    Report {
        conicut_version: env!("CARGO_PKG_VERSION").to_string(),
        drawing: input.drawing.to_string(),
        drawing_units: input.drawing_units.to_string(),
        machine: input.machine.to_string(),
        machine_kind: input.machine_kind.to_string(),
        tool_diameter_mm: input.tool_diameter,
        cut_depth_mm: input.cut_depth,
        tolerance_mm: input.tolerance,
        features,
        files: Vec::new(),
        warnings: input.warnings,
        notes: input.notes,
        layers: input.layers.to_vec(),
        program_bounds_mm: input
            .program_bounds
            .map(|(min, max)| ProgramBounds { min, max }),
        largest_arc_radius_mismatch_mm: input.largest_arc_radius_mismatch,
        rapids: input.rapids.map(|r| RapidReport {
            length_mm: r.length,
            pierce_tree_mm: r.pierce_tree,
            lower_bound_mm: r.lower_bound,
        }),
        tab_height_mm: input.tab_height,
        cycle_time: input.cycle_time,
        work_zero: WorkZeroReport {
            rule: input.work_zero.rule.word(),
            description: input.work_zero.words.clone(),
            drawing_point_mm: [
                input.work_zero.drawing_point.x,
                input.work_zero.drawing_point.y,
            ],
            shift_mm: [input.work_zero.shift.x, input.work_zero.shift.y],
        },
    }
}

/// Appends a titled list (`warnings:`, `notes:`) to a text report; nothing when it is empty.
pub fn write_list(s: &mut String, title: &str, items: &[String]) {
    if items.is_empty() {
        return;
    }
    let _ = writeln!(s, "\n{title}:");
    for item in items {
        let _ = writeln!(s, "  - {item}");
    }
}

impl Report {
    /// The tabs of every feature that has some, one line each.
    fn write_tabs(&self, s: &mut String) {
        for f in self.features.iter().filter(|f| !f.tabs.is_empty()) {
            let high = self
                .tab_height_mm
                .map_or(String::new(), |h| format!(", {h} mm high"));
            let _ = writeln!(
                s,
                "\ntabs on {}: {} (uncut stretches of the tool-centre path{high}):",
                f.name,
                f.tabs.len()
            );
            for t in &f.tabs {
                let _ = writeln!(
                    s,
                    "  at ({:.3}, {:.3}): {:.2} to {:.2} mm along the contour, bridge {:.2} mm",
                    t.middle_mm[0], t.middle_mm[1], t.from_mm, t.to_mm, t.bridge_mm
                );
            }
        }
    }

    /// The report as pretty-printed JSON.
    pub fn to_json(&self) -> String {
        // Serialising plain numbers, strings and vectors cannot fail.
        serde_json::to_string_pretty(self).unwrap_or_default()
    }

    /// One line naming every layer with what it was used for and its entities.
    fn write_layers(&self, s: &mut String) {
        if self.layers.is_empty() {
            return;
        }
        let list: Vec<String> = self
            .layers
            .iter()
            .map(|l| {
                let role = match (l.role, l.reason.as_deref()) {
                    (crate::chain::LayerRole::Cut, _) => "cut".to_string(),
                    (crate::chain::LayerRole::Bays, _) => "bays".to_string(),
                    (crate::chain::LayerRole::Construction, _) => "construction".to_string(),
                    (crate::chain::LayerRole::NotCut, Some(why)) => format!("not cut, {why}"),
                    (crate::chain::LayerRole::NotCut, None) => "not cut".to_string(),
                };
                format!("{} ({role}, {})", l.name, l.entities)
            })
            .collect();
        let _ = writeln!(s, "\nlayers: {}", list.join("; "));
    }

    /// The rapid travel and its bound, when measured.
    fn write_rapids(&self, s: &mut String) {
        if let Some(r) = &self.rapids {
            let _ = writeln!(
                s,
                "\nrapids: {:.1} mm in XY; no order of these cuts needs less than {:.1} mm (the \
                 minimum spanning tree of the work zero and the pierce points, {:.1} mm, less \
                 how far each cut ends from its pierce point)",
                r.length_mm, r.lower_bound_mm, r.pierce_tree_mm
            );
        }
    }

    /// The one-screen summary for people.
    pub fn to_text(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(s, "conicut {} report", self.conicut_version);
        let cutter = if self.cut_depth_mm > 0.0 {
            format!(
                "tool {} mm, depth {} mm",
                self.tool_diameter_mm, self.cut_depth_mm
            )
        } else {
            format!("kerf {} mm, cut through", self.tool_diameter_mm)
        };
        let _ = writeln!(
            s,
            "drawing {} ({}), machine: {} ({}), {cutter}, tolerance {} mm",
            self.drawing, self.drawing_units, self.machine, self.machine_kind, self.tolerance_mm
        );
        let z = &self.work_zero;
        if z.shift_mm == [0.0, 0.0] {
            let _ = writeln!(
                s,
                "work zero: X0 Y0 = {}; coordinates as drawn",
                z.description
            );
        } else {
            let _ = writeln!(
                s,
                "work zero: X0 Y0 = {}, drawing point ({:.3}, {:.3}); program coordinates = \
                 drawing coordinates + ({:.3}, {:.3})",
                z.description,
                z.drawing_point_mm[0],
                z.drawing_point_mm[1],
                z.shift_mm[0],
                z.shift_mm[1]
            );
        }
        let _ = writeln!(s);
        let w = self
            .features
            .iter()
            .map(|f| f.name.chars().count())
            .max()
            .unwrap_or(0)
            .max(7);
        let _ = writeln!(
            s,
            "{:<w$} {:<8} {:<7} {:>20} {:>9} {:>9} {:>8} {:>6} {:>10}",
            "feature",
            "kind",
            "side",
            "centre (mm)",
            "a (mm)",
            "b (mm)",
            "angle°",
            "moves",
            "dev (mm)"
        );
        for f in &self.features {
            let kind = match f.kind {
                FeatureKind::Opening => "opening",
                FeatureKind::Boss => "boss",
                FeatureKind::Hole => "hole",
                FeatureKind::Outline => "outline",
                FeatureKind::Pocket => "pocket",
            };
            let side = match f.cut_side {
                CutSide::Inside => "inside",
                CutSide::Outside => "outside",
            };
            let (centre, a, b, ang) = match &f.ellipse {
                Some(e) => (
                    format!("({:.3}, {:.3})", e.centre_mm[0], e.centre_mm[1]),
                    format!("{:.3}", e.semi_major_mm),
                    format!("{:.3}", e.semi_minor_mm),
                    format!("{:.2}", e.angle_deg),
                ),
                None => ("-".into(), "-".into(), "-".into(), "-".into()),
            };
            let _ = writeln!(
                s,
                "{:<w$} {:<8} {:<7} {:>20} {:>9} {:>9} {:>8} {:>6} {:>10.6}",
                f.name, kind, side, centre, a, b, ang, f.contour_moves, f.measured_deviation_mm
            );
        }
        let _ = writeln!(
            s,
            "(a, b: the ellipse's semi-axes, half its major and minor axes, as in the preview)"
        );
        self.write_tabs(&mut s);
        self.write_rapids(&mut s);
        if let Some(t) = &self.cycle_time {
            let m = crate::check::program::minutes;
            let _ = writeln!(
                s,
                "\ncycle time (estimated): {} (cutting {}, rapids {}, dwells {}); {:.1} mm cut",
                m(t.total_s),
                m(t.cutting_s),
                m(t.rapid_s),
                m(t.dwell_s),
                t.cut_length_mm
            );
        }
        self.write_layers(&mut s);
        write_list(&mut s, "warnings", &self.warnings);
        write_list(&mut s, "notes", &self.notes);
        if !self.files.is_empty() {
            let _ = writeln!(s, "\nfiles:");
            for f in &self.files {
                let replaced = if f.replaced { " (replaced)" } else { "" };
                let _ = writeln!(s, "  {:<12} {}{replaced}", f.role, f.path);
            }
        }
        s
    }
}
