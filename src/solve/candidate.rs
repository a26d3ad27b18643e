//! What a solver returns: every candidate it found, which one it picked, and why.

use super::conic::ConicKind;
use crate::geom::Ellipse;
use serde::Serialize;

/// One solution a rule or a constraint set admits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Candidate {
    pub kind: ConicKind,
    /// The ellipse, when the candidate is one (circles included).
    pub ellipse: Option<Ellipse>,
    /// Position along the Newton line for members of a four-sided bay's family (0 and 1 at the
    /// diagonals' midpoints).
    pub parameter: Option<f64>,
    /// Whether it can be cut: a real ellipse inside the bay (or, for free constraints, a real
    /// ellipse).
    pub cuttable: bool,
    /// What it is or why it cannot be cut, in words.
    pub note: String,
    /// Largest relative residual of its constraints (tangency, or points).
    pub residual: f64,
}

impl Candidate {
    pub fn area(&self) -> Option<f64> {
        self.ellipse.map(|e| e.area())
    }
}

/// The outcome of solving one feature.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Solution {
    /// Every candidate found, in a stable order.
    candidates: Vec<Candidate>,
    /// Index into `candidates` of the one to cut.
    chosen: usize,
    /// The chosen candidate's ellipse.
    ellipse: Ellipse,
    /// Why that one, in words.
    reason: String,
}

impl Solution {
    /// Every candidate found, in a stable order.
    pub fn candidates(&self) -> &[Candidate] {
        &self.candidates
    }

    /// Index into [`Self::candidates`] of the one to cut.
    pub fn chosen(&self) -> usize {
        self.chosen
    }

    /// The chosen candidate's ellipse (always a cuttable ellipse).
    pub fn ellipse(&self) -> Ellipse {
        self.ellipse
    }

    /// Why that one, in words.
    pub fn reason(&self) -> &str {
        &self.reason
    }

    /// The same solution moved by `v`: every candidate's ellipse and the chosen one.
    pub fn translated(&self, v: crate::geom::Vec2) -> Solution {
        Solution {
            candidates: self
                .candidates
                .iter()
                .map(|c| Candidate {
                    ellipse: c.ellipse.map(|e| e.translated(v)),
                    ..c.clone()
                })
                .collect(),
            chosen: self.chosen,
            ellipse: self.ellipse.translated(v),
            reason: self.reason.clone(),
        }
    }

    /// A solution choosing `candidates[chosen]`; `None` unless that candidate is a cuttable
    /// ellipse.
    pub fn new(candidates: Vec<Candidate>, chosen: usize, reason: String) -> Option<Solution> {
        let c = candidates.get(chosen)?;
        let ellipse = c.ellipse.filter(|_| c.cuttable)?;
        Some(Solution {
            candidates,
            chosen,
            ellipse,
            reason,
        })
    }
}
