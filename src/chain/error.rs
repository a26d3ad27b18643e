//! Why the drawing's entities do not make a part: the chaining errors and their messages.

use crate::geom::Point;

/// A run of pieces that does not close, for [`ChainError::Open`].
#[derive(Debug, Clone, PartialEq)]
pub struct OpenContour {
    pub layer: String,
    pub handles: Vec<String>,
    pub pieces: usize,
    /// Each loose end, with the nearest other loose end on the layer and its distance (mm).
    pub gaps: Vec<(Point, Option<(Point, f64)>)>,
}

impl std::fmt::Display for OpenContour {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "layer {}, {} piece{} (handles {}):",
            self.layer,
            self.pieces,
            if self.pieces == 1 { "" } else { "s" },
            fmt_handles(&self.handles)
        )?;
        for (end, nearest) in &self.gaps {
            match nearest {
                Some((q, d)) => write!(
                    f,
                    " loose end at {}, gap of {d:.4} mm to the loose end at {};",
                    fmt_point(*end),
                    fmt_point(*q)
                )?,
                None => write!(
                    f,
                    " loose end at {}, no other loose end on the layer;",
                    fmt_point(*end)
                )?,
            }
        }
        Ok(())
    }
}

/// Why the drawing's entities do not make a part. Each message names the layer, the DXF
/// handles and a place in mm, and says what to do.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ChainError {
    #[error("the gap tolerance must be a finite number of mm, zero or more (got {0})")]
    BadMaxGap(f64),
    #[error(
        "{} contour{} not closed (gap tolerance {max_gap} mm): {}. Close the gaps in the \
         drawing, or raise the gap tolerance above the gap if the ends are meant to meet",
        contours.len(), if contours.len() == 1 { " is" } else { "s are" },
        contours.iter().map(|c| format!("[{c}]")).collect::<Vec<_>>().join(" ")
    )]
    Open {
        contours: Vec<OpenContour>,
        max_gap: f64,
    },
    #[error(
        "layer {layer}: three or more pieces meet at {} (handles {}), so they do not form a \
         simple closed contour. Delete duplicate or overlapping pieces there",
        fmt_point(*at), fmt_handles(handles)
    )]
    Branch {
        layer: String,
        at: Point,
        handles: Vec<String>,
    },
    #[error(
        "layer {layer}: the ELLIPSE (handle {handle}) starting at {} is only part of an \
         ellipse; partial ellipses in contours are not supported yet. Replace it with arcs or \
         a polyline, or draw the whole ellipse",
        fmt_point(*at)
    )]
    PartialEllipse {
        layer: String,
        handle: String,
        at: Point,
    },
    #[error(
        "layer {layer}: the ELLIPSE (handle {handle}) centred at {} is on the bay layer; bays \
         are drawn with straight sides. Move it to a cut layer if it is to be cut as drawn",
        fmt_point(*at)
    )]
    EllipseOnBayLayer {
        layer: String,
        handle: String,
        at: Point,
    },
    /// A loop on the bay layer is not a usable bay (boxed to keep the error small).
    #[error("{0}")]
    Bay(Box<BayError>),
    #[error(
        "layer {layer}: the closed contour through {} (handles {}) encloses no area. Delete \
         the duplicate or doubled-back pieces",
        fmt_point(*at), fmt_handles(handles)
    )]
    NoArea {
        layer: String,
        handles: Vec<String>,
        at: Point,
    },
    #[error(
        "layer {layer}: the loop through handles {} did not close after its gaps were snapped \
         ({error}); this is a fault in conicut: please report it with the drawing",
        fmt_handles(handles)
    )]
    Unclosed {
        layer: String,
        handles: Vec<String>,
        error: crate::geom::ContourError,
    },
    #[error(
        "{first} and {second} cross or touch near {}. Outline and holes must not meet; correct \
         the drawing",
        fmt_point(*at)
    )]
    Crossing {
        first: String,
        second: String,
        at: Point,
    },
    #[error(
        "{inner} lies inside {middle}, which itself lies inside {outer}: a hole inside a hole \
         cannot be cut from one plate. Delete the inner one, or draw it as a separate part"
    )]
    Nested {
        inner: String,
        middle: String,
        outer: String,
    },
    #[error(
        "{} closed shapes lie outside each other while some hold others ({}): a drawing must \
         hold one part, one outline with its holes. Remove the extra parts or stray shapes",
        shapes.len(), shapes.join("; ")
    )]
    SeveralOutlines { shapes: Vec<String> },
    #[error(
        "{shape} holds the other shapes, so it would be the outline, but an ELLIPSE cannot be \
         an outline yet. Draw the outline with arcs or a polyline"
    )]
    EllipseOutline { shape: String },
}

/// What is wrong with a bay, where.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{bay} (layer {layer}, handles {handles}) {problem}", problem = self.problem_text())]
pub struct BayError {
    /// `bay N`.
    pub bay: String,
    pub layer: String,
    /// The DXF handles of the bay's pieces, comma separated.
    pub handles: String,
    /// The corner or point the problem is at.
    pub at: Point,
    pub problem: BayProblem,
}

/// The ways a loop on the bay layer can fail to be a bay.
#[derive(Debug, Clone, PartialEq)]
pub enum BayProblem {
    /// A side is an arc.
    Arc,
    /// A side is no longer than the largest gap (a repeated corner).
    ShortSide { length: f64 },
    /// Fewer than three sides once collinear runs are merged.
    TooFewSides { sides: usize },
    /// Flat, or turning straight back on itself.
    Degenerate { reason: String },
    /// A corner turns clockwise (counter-clockwise bay), or the sides cross.
    NotConvex,
}

impl BayError {
    fn problem_text(&self) -> String {
        let at = fmt_point(self.at);
        match &self.problem {
            BayProblem::Arc => format!(
                "has an arc starting at {at}; bays must have straight sides only. Redraw the \
                 bay with lines"
            ),
            BayProblem::ShortSide { length } => format!(
                "has a side of length {length:.2e} mm starting at {at} (a repeated corner or a \
                 zero-length side). Delete the repeated corner"
            ),
            BayProblem::TooFewSides { sides } => format!(
                "has only {sides} side{} once straight runs are merged (near {at}); a bay needs \
                 at least 3",
                if *sides == 1 { "" } else { "s" }
            ),
            BayProblem::Degenerate { reason } => {
                format!("is degenerate near {at}: {reason}. Redraw it")
            }
            BayProblem::NotConvex => format!(
                "is not convex: it turns the wrong way (or its sides cross) at the corner {at}. \
                 An ellipse can only be fitted to a convex bay; redraw it, or split it into \
                 convex bays"
            ),
        }
    }
}

/// "(12.500, -3.000) mm".
pub(super) fn fmt_point(p: Point) -> String {
    format!("({:.3}, {:.3}) mm", p.x, p.y)
}

/// Handles without repeats, at most eight of them, comma separated.
pub(super) fn fmt_handles(handles: &[String]) -> String {
    let mut seen: Vec<&str> = Vec::new();
    for h in handles {
        if !seen.contains(&h.as_str()) {
            seen.push(h);
        }
    }
    let mut s = seen.iter().take(8).copied().collect::<Vec<_>>().join(", ");
    if seen.len() > 8 {
        s.push_str(&format!(" and {} more", seen.len() - 8));
    }
    s
}
