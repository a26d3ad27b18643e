//! What `conicut solve` shows: every feature, every candidate its rule or constraints admit,
//! which one is cut and why. As text for people and JSON for scripts (keys in README.md).

use super::features::SolvedFeature;
use crate::report::write_list;
use crate::settings::job_file::CutKind;
use crate::solve::Candidate;
use crate::solve::ConicKind;
use serde::Serialize;
use std::fmt::Write as _;

/// One candidate as listed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CandidateListing {
    /// 1-based, the number a job file's `choose` refers to.
    pub number: usize,
    pub kind: String,
    #[serde(rename = "center_mm")]
    pub centre_mm: Option<[f64; 2]>,
    pub semi_major_mm: Option<f64>,
    pub semi_minor_mm: Option<f64>,
    pub angle_deg: Option<f64>,
    pub area_mm2: Option<f64>,
    /// Position along the Newton line (four-sided bays).
    pub family_parameter: Option<f64>,
    pub cuttable: bool,
    pub chosen: bool,
    pub note: String,
    pub residual: f64,
}

/// One feature as listed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FeatureListing {
    pub name: String,
    pub source: String,
    pub rule: Option<String>,
    pub margin_mm: Option<f64>,
    pub cut: CutKind,
    /// `solved` or `failed`.
    pub status: String,
    /// Why the chosen candidate, or why none could be chosen.
    pub reason: String,
    pub candidates: Vec<CandidateListing>,
    /// For a fit: points, RMS and largest distance (mm).
    pub fit_points: Option<usize>,
    pub fit_rms_mm: Option<f64>,
    pub fit_max_mm: Option<f64>,
    /// For a fit: `geometric` or `algebraic`, the one cut.
    pub fit_method: Option<String>,
}

/// The whole listing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SolveListing {
    pub conicut_version: String,
    pub drawing: String,
    pub drawing_units: String,
    pub features: Vec<FeatureListing>,
    pub warnings: Vec<String>,
    pub notes: Vec<String>,
}

fn candidate(i: usize, c: &Candidate, chosen: bool) -> CandidateListing {
    CandidateListing {
        number: i + 1,
        kind: c.kind.to_string(),
        centre_mm: c.ellipse.map(|e| [e.centre().x, e.centre().y]),
        semi_major_mm: c.ellipse.map(|e| e.a()),
        semi_minor_mm: c.ellipse.map(|e| e.b()),
        // A circle has no axis direction.
        angle_deg: c
            .ellipse
            .filter(|_| c.kind != ConicKind::Circle)
            .map(|e| e.angle().to_degrees()),
        area_mm2: c.ellipse.map(|e| e.area()),
        family_parameter: c.parameter,
        cuttable: c.cuttable,
        chosen,
        note: c.note.clone(),
        residual: c.residual,
    }
}

/// Builds the listing.
pub fn build(
    drawing: &str,
    units: &str,
    features: &[SolvedFeature],
    warnings: Vec<String>,
    notes: Vec<String>,
) -> SolveListing {
    let features = features
        .iter()
        .map(|f| {
            let (status, reason, candidates) = match &f.outcome {
                Ok(s) => (
                    "solved",
                    s.reason().to_string(),
                    s.candidates()
                        .iter()
                        .enumerate()
                        .map(|(i, c)| candidate(i, c, i == s.chosen()))
                        .collect(),
                ),
                Err(e) => (
                    "failed",
                    e.reason.clone(),
                    e.candidates
                        .iter()
                        .enumerate()
                        .map(|(i, c)| candidate(i, c, false))
                        .collect(),
                ),
            };
            FeatureListing {
                name: f.name.clone(),
                source: f.source.clone(),
                rule: f.rule.clone(),
                margin_mm: f.margin_mm,
                cut: f.cut,
                status: status.to_string(),
                reason,
                candidates,
                fit_points: f.fit.map(|q| q.points),
                fit_rms_mm: f.fit.map(|q| q.rms_residual_mm),
                fit_max_mm: f.fit.map(|q| q.max_residual_mm),
                fit_method: f.fit.map(|q| {
                    if q.geometric {
                        "geometric"
                    } else {
                        "algebraic"
                    }
                    .to_string()
                }),
            }
        })
        .collect();
    SolveListing {
        conicut_version: env!("CARGO_PKG_VERSION").to_string(),
        drawing: drawing.to_string(),
        drawing_units: units.to_string(),
        features,
        warnings,
        notes,
    }
}

fn opt(v: Option<f64>, decimals: usize) -> String {
    v.map(|x| format!("{x:.decimals$}"))
        .unwrap_or_else(|| "-".into())
}

impl SolveListing {
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).unwrap_or_default()
    }

    pub fn to_text(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(
            s,
            "conicut {}: features of {} ({})",
            self.conicut_version, self.drawing, self.drawing_units
        );
        for f in &self.features {
            let _ = writeln!(s);
            let mut head = format!("{}: {}", f.name, f.source);
            if let Some(r) = &f.rule {
                let _ = write!(head, ", rule: {r}");
            }
            if let Some(m) = f.margin_mm {
                let _ = write!(head, ", margin {m} mm");
            }
            let _ = write!(head, ", cut as {}", f.cut.as_str());
            let _ = writeln!(s, "{head}");
            if let (Some(n), Some(rms), Some(max)) = (f.fit_points, f.fit_rms_mm, f.fit_max_mm) {
                let method = f.fit_method.as_deref().unwrap_or("least-squares");
                let _ = writeln!(
                    s,
                    "  {method} fit to {n} points: RMS distance {rms:.4} mm, largest {max:.4} mm \
                     (both fits listed below)"
                );
            }
            if !f.candidates.is_empty() {
                let _ = writeln!(
                    s,
                    "     # {:<11} {:>22} {:>9} {:>9} {:>8} {:>11} {:>9} {:>9}  note",
                    "kind",
                    "centre (mm)",
                    "a (mm)",
                    "b (mm)",
                    "angle°",
                    "area (mm²)",
                    "t",
                    "residual"
                );
            }
            for c in &f.candidates {
                let centre = c
                    .centre_mm
                    .map(|p| format!("({:.3}, {:.3})", p[0], p[1]))
                    .unwrap_or_else(|| "-".into());
                let _ = writeln!(
                    s,
                    "  {} {:>2} {:<11} {:>22} {:>9} {:>9} {:>8} {:>11} {:>9} {:>9.1e}  {}",
                    if c.chosen { "*" } else { " " },
                    c.number,
                    c.kind,
                    centre,
                    opt(c.semi_major_mm, 3),
                    opt(c.semi_minor_mm, 3),
                    opt(c.angle_deg, 2),
                    opt(c.area_mm2, 1),
                    opt(c.family_parameter, 5),
                    c.residual,
                    c.note
                );
            }
            let label = if f.status == "solved" {
                "chosen"
            } else {
                "NOT SOLVED"
            };
            let _ = writeln!(s, "  {label}: {}", f.reason);
        }
        write_list(&mut s, "warnings", &self.warnings);
        write_list(&mut s, "notes", &self.notes);
        s
    }
}
