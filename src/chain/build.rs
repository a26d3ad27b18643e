//! [`build_part`]: from the drawing's entities to the part's outline, holes and bays.

use super::bay::make_bay;
use super::join::{Piece, join};
use super::{Bay, Hole, HoleShape, Part};
use crate::geom::{ArcSegment, Ellipse, Point, Segment};
use crate::geom::{Contour, Element, bounds_of};
use crate::read::{Drawing, EntityKind};

/// The layer that holds bays unless the user names another. Matched case-insensitively, as DXF
/// layer names are.
pub const DEFAULT_BAY_LAYER: &str = "OPENING-BAYS";

/// Default gap tolerance, mm: piece ends this close or closer are joined.
///
/// 0.01 mm is ten times the usual 0.001 mm resolution of a CNC program yet far below a laser
/// kerf or the smallest end mill a bay is cut with (common practice); CAD exports are
/// normally exact to 1e-6 mm or better, so a larger gap is a drawing error worth showing.
pub const DEFAULT_GAP_TOLERANCE: f64 = 0.01;

/// How far a flattened arc or ellipse may lie inside the true curve (mm) in the crossing
/// check between contours: the sagitta of each chord. Crossings by less than this may be missed.
pub const CROSSING_CHECK_SAGITTA: f64 = 1e-3;

/// Options for [`build_part`].
#[derive(Debug, Clone, PartialEq)]
pub struct ChainOptions {
    /// Ends at most this far apart (mm) are joined; must be finite and not negative.
    pub gap_tolerance: f64,
    /// The layer holding bays (compared case-insensitively).
    pub bay_layer: String,
    /// Layers of construction geometry that is neither cut nor a bay (probe points, guide lines
    /// named by a job file; compared case-insensitively): their entities are left out.
    pub construction_layers: Vec<String>,
}

impl Default for ChainOptions {
    fn default() -> Self {
        ChainOptions {
            gap_tolerance: DEFAULT_GAP_TOLERANCE,
            bay_layer: DEFAULT_BAY_LAYER.to_string(),
            construction_layers: Vec::new(),
        }
    }
}

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
    BadGapTolerance(f64),
    #[error(
        "{} contour{} not closed (gap tolerance {tolerance} mm): {}. Close the gaps in the \
         drawing, or raise the gap tolerance above the gap if the ends are meant to meet",
        contours.len(), if contours.len() == 1 { " is" } else { "s are" },
        contours.iter().map(|c| format!("[{c}]")).collect::<Vec<_>>().join(" ")
    )]
    Open {
        contours: Vec<OpenContour>,
        tolerance: f64,
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
    /// A side is no longer than the gap tolerance (a repeated corner).
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

/// Joins the drawing's pieces into closed contours and sorts them into the part.
///
/// * Per layer (layer names compared case-insensitively), LINEs, ARCs and open polylines are
///   joined end to end where ends lie within `gap_tolerance`; shared points are snapped. Closed
///   polylines (a last vertex repeating the first is dropped) and CIRCLEs (one arc of sweep 2π)
///   are contours as they are; a full ELLIPSE on a cut layer is a hole.
/// * Any run that does not close, on any layer, is reported in one [`ChainError::Open`].
/// * Loops on the bay layer become bays (see [`make_bay`]); all other layers are cut layers.
/// * Cut shapes: when some lie inside others, there must be exactly one outermost shape, a
///   contour: the outline; every other shape is a hole directly inside it (not inside another
///   hole). When none lies inside another, a single contour is the outline, and several shapes
///   are all holes in a plate that is not drawn (`outline = None`, with a warning). No two
///   shapes may cross or touch (checked on chords within [`CROSSING_CHECK_SAGITTA`]).
/// * The outline and the holes' contours are made counter-clockwise. Bays and holes are named
///   `bay 1`, `bay 2`, … and `hole 1`, … in order of the lower-left corner of their bounding
///   boxes: by x, then by y, then by first handle.
/// * A bay not inside the outline, and ignored POINT entities, give warnings.
/// * Entities on the construction layers are left out altogether.
pub fn build_part(drawing: &Drawing, opts: &ChainOptions) -> Result<Part, ChainError> {
    let tol = opts.gap_tolerance;
    if !(tol.is_finite() && tol >= 0.0) {
        return Err(ChainError::BadGapTolerance(tol));
    }
    let bay_key = opts.bay_layer.to_lowercase();
    let mut warnings = Vec::new();

    // Gather per layer, in order of first appearance.
    let mut layers: Vec<LayerStuff> = Vec::new();
    let mut points: Vec<String> = Vec::new();
    for e in &drawing.entities {
        let key = e.layer.to_lowercase();
        if opts
            .construction_layers
            .iter()
            .any(|l| l.to_lowercase() == key)
        {
            continue;
        }
        let idx = match layers.iter().position(|l| l.key == key) {
            Some(i) => i,
            None => {
                layers.push(LayerStuff {
                    is_bay: key == bay_key,
                    key,
                    name: e.layer.clone(),
                    pieces: Vec::new(),
                    loops: Vec::new(),
                    ellipses: Vec::new(),
                });
                layers.len() - 1
            }
        };
        let layer = &mut layers[idx];
        let h = e.handle.clone();
        match &e.kind {
            EntityKind::Line(s) => layer.pieces.push(Piece {
                elements: vec![Element::Line(*s)],
                handles: vec![h],
            }),
            EntityKind::Arc(a) => layer.pieces.push(Piece {
                elements: vec![Element::Arc(*a)],
                handles: vec![h],
            }),
            EntityKind::Circle { center, radius } => layer.loops.push(Piece {
                elements: vec![Element::Arc(ArcSegment::circle(*center, *radius))],
                handles: vec![h],
            }),
            EntityKind::Polyline { vertices, closed } => {
                let piece = polyline_piece(vertices, *closed, &h, tol, !layer.is_bay);
                if piece.elements.is_empty() {
                    continue;
                }
                let ends_meet = piece
                    .elements
                    .first()
                    .zip(piece.elements.last())
                    .is_some_and(|(f, l)| l.end().distance(f.start()) <= tol);
                if *closed || (ends_meet && piece.elements.len() > 1) {
                    let mut piece = piece;
                    super::join::snap_loop(&mut piece.elements);
                    layer.loops.push(piece);
                } else {
                    layer.pieces.push(piece);
                }
            }
            EntityKind::Ellipse { ellipse, start, .. } => {
                if !e.kind.is_full_ellipse() {
                    return Err(ChainError::PartialEllipse {
                        layer: e.layer.clone(),
                        handle: h,
                        at: ellipse.point(*start),
                    });
                }
                if layer.is_bay {
                    return Err(ChainError::EllipseOnBayLayer {
                        layer: e.layer.clone(),
                        handle: h,
                        at: ellipse.center(),
                    });
                }
                layer.ellipses.push((*ellipse, h));
            }
            EntityKind::Point(p) => points.push(format!(
                "POINT on layer {} (handle {}) at {}",
                e.layer,
                h,
                fmt_point(*p)
            )),
        }
    }
    if !points.is_empty() {
        warnings.push(format!(
            "ignored {} POINT entit{} (points are not used yet): {}",
            points.len(),
            if points.len() == 1 { "y" } else { "ies" },
            points.join("; ")
        ));
    }

    // Join every layer; collect all open runs before failing.
    let mut open = Vec::new();
    for layer in &mut layers {
        let joined = join(&layer.pieces, tol).map_err(|b| ChainError::Branch {
            layer: layer.name.clone(),
            at: b.at,
            handles: b.handles,
        })?;
        layer.loops.extend(joined.loops);
        let loose: Vec<Point> = joined.open.iter().flat_map(|r| r.ends).collect();
        for (r, run) in joined.open.into_iter().enumerate() {
            let gaps = (0..2)
                .map(|i| {
                    let me = 2 * r + i;
                    let end = loose[me];
                    let nearest = loose
                        .iter()
                        .enumerate()
                        .filter(|&(k, _)| k != me)
                        .map(|(_, &q)| (q, q.distance(end)))
                        .min_by(|a, b| a.1.total_cmp(&b.1));
                    (end, nearest)
                })
                .collect();
            open.push(OpenContour {
                layer: layer.name.clone(),
                handles: run.handles,
                pieces: run.pieces,
                gaps,
            });
        }
    }
    if !open.is_empty() {
        return Err(ChainError::Open {
            contours: open,
            tolerance: tol,
        });
    }

    // Bays.
    let mut bay_loops: Vec<(Piece, String)> = Vec::new();
    let mut shapes: Vec<Shape> = Vec::new();
    for layer in layers {
        if layer.is_bay {
            bay_loops.extend(layer.loops.into_iter().map(|p| (p, layer.name.clone())));
            continue;
        }
        for piece in layer.loops {
            let contour = Contour {
                elements: piece.elements,
                layer: layer.name.clone(),
                handles: piece.handles,
            };
            let area = contour.signed_area();
            let perimeter: f64 = contour.elements.iter().map(Element::length).sum();
            if area.abs() <= tol.max(1e-9) * perimeter {
                return Err(ChainError::NoArea {
                    layer: contour.layer.clone(),
                    handles: contour.handles.clone(),
                    at: contour.start_point().unwrap_or(Point::ORIGIN),
                });
            }
            let contour = if area < 0.0 {
                contour.reversed()
            } else {
                contour
            };
            shapes.push(Shape::from_contour(contour));
        }
        for (e, h) in layer.ellipses {
            shapes.push(Shape::from_ellipse(e, layer.name.clone(), h));
        }
    }

    bay_loops.sort_by(|a, b| order_key(&a.0.elements, &a.0.handles, &b.0.elements, &b.0.handles));
    let mut bays: Vec<Bay> = Vec::new();
    for (i, (piece, layer)) in bay_loops.iter().enumerate() {
        bays.push(make_bay(
            &format!("bay {}", i + 1),
            layer,
            &piece.elements,
            &piece.handles,
            tol,
        )?);
    }

    let (outline, holes, mut more) = classify(shapes)?;
    warnings.append(&mut more);

    if let Some(outline) = &outline {
        let poly = flatten_contour(outline);
        for bay in &bays {
            let outside = bay.corners.iter().find(|&&c| !outline.contains(c));
            let crossing = polygons_cross(&bay.corners, &poly);
            if let Some(c) = outside {
                warnings.push(format!(
                    "{} (layer {}) is not inside the outline: its corner {} lies outside it",
                    bay.name,
                    bay.layer,
                    fmt_point(*c)
                ));
            } else if let Some(p) = crossing {
                warnings.push(format!(
                    "{} (layer {}) is not inside the outline: the outline crosses it near {}",
                    bay.name,
                    bay.layer,
                    fmt_point(p)
                ));
            }
        }
    }

    Ok(Part {
        outline,
        holes,
        bays,
        warnings,
    })
}

struct LayerStuff {
    key: String,
    name: String,
    is_bay: bool,
    pieces: Vec<Piece>,
    loops: Vec<Piece>,
    ellipses: Vec<(Ellipse, String)>,
}

/// The elements of a polyline. Zero-length pieces (consecutive vertices at most 1e-9 mm apart)
/// are dropped on cut layers and kept on the bay layer (where they are reported); a closed
/// polyline's last vertex repeating its first (within `tol`) is dropped in either case.
fn polyline_piece(
    vertices: &[(Point, f64)],
    closed: bool,
    handle: &str,
    tol: f64,
    drop_zero: bool,
) -> Piece {
    let mut v = vertices.to_vec();
    if closed && v.len() > 1 {
        let (first, last) = (v[0].0, v[v.len() - 1].0);
        if first.distance(last) <= tol {
            v.pop();
        }
    }
    let n = v.len();
    let count = if closed { n } else { n.saturating_sub(1) };
    let mut elements = Vec::with_capacity(count);
    for i in 0..count {
        let (p, bulge) = v[i];
        let q = v[(i + 1) % n].0;
        if drop_zero && p.distance(q) <= 1e-9 {
            continue;
        }
        let el = match ArcSegment::from_bulge(p, q, bulge) {
            Some(a) => Element::Arc(a),
            None => Element::Line(Segment::new(p, q)),
        };
        elements.push(el);
    }
    let handles = vec![handle.to_string(); elements.len()];
    Piece { elements, handles }
}

/// Order by the lower-left corner of the bounding box (x, then y), then by first handle.
fn order_key(a: &[Element], ha: &[String], b: &[Element], hb: &[String]) -> std::cmp::Ordering {
    let lo = |els: &[Element]| {
        let c = Contour {
            elements: els.to_vec(),
            layer: String::new(),
            handles: Vec::new(),
        };
        c.bounds().map(|(lo, _)| lo).unwrap_or(Point::ORIGIN)
    };
    let (pa, pb) = (lo(a), lo(b));
    pa.x.total_cmp(&pb.x)
        .then(pa.y.total_cmp(&pb.y))
        .then_with(|| ha.first().cmp(&hb.first()))
}

/// A closed cut shape, with what the classification needs.
struct Shape {
    kind: ShapeKind,
    description: String,
    area: f64,
    polygon: Vec<Point>,
    low: Point,
    high: Point,
    sample: Point,
    first_handle: String,
}

enum ShapeKind {
    Contour(Contour),
    Ellipse(Ellipse, String),
}

impl Shape {
    fn from_contour(c: Contour) -> Shape {
        let polygon = flatten_contour(&c);
        let (low, high) = c.bounds().unwrap_or((Point::ORIGIN, Point::ORIGIN));
        let kinds: Vec<&str> = c
            .elements
            .iter()
            .map(|e| match e {
                Element::Line(_) => "line",
                Element::Arc(_) => "arc",
            })
            .collect();
        let description = if c.elements.len() == 1 && kinds[0] == "arc" {
            format!(
                "the circle on layer {} (handle {})",
                c.layer,
                fmt_handles(&c.handles)
            )
        } else {
            format!(
                "the contour on layer {} (handles {})",
                c.layer,
                fmt_handles(&c.handles)
            )
        };
        Shape {
            area: c.signed_area().abs(),
            sample: c.elements[0].start(),
            first_handle: c.handles.first().cloned().unwrap_or_default(),
            polygon,
            low,
            high,
            description,
            kind: ShapeKind::Contour(c),
        }
    }

    fn from_ellipse(e: Ellipse, layer: String, handle: String) -> Shape {
        let polygon = flatten_ellipse(&e);
        let (low, high) = bounds_of(&polygon).unwrap_or((Point::ORIGIN, Point::ORIGIN));
        Shape {
            description: format!("the ELLIPSE on layer {layer} (handle {handle})"),
            area: e.area(),
            sample: e.point(0.0),
            first_handle: handle,
            polygon,
            low,
            high,
            kind: ShapeKind::Ellipse(e, layer),
        }
    }

    fn contains(&self, p: Point) -> bool {
        match &self.kind {
            ShapeKind::Contour(c) => c.contains(p),
            ShapeKind::Ellipse(e, _) => e.contains(p),
        }
    }

    fn boxes_overlap(&self, other: &Shape) -> bool {
        self.low.x <= other.high.x
            && other.low.x <= self.high.x
            && self.low.y <= other.high.y
            && other.low.y <= self.high.y
    }
}

type Classified = (Option<Contour>, Vec<Hole>, Vec<String>);

fn classify(mut shapes: Vec<Shape>) -> Result<Classified, ChainError> {
    let n = shapes.len();
    // Crossings first: without them, each pair is either nested or apart.
    for i in 0..n {
        for j in i + 1..n {
            if shapes[i].boxes_overlap(&shapes[j])
                && let Some(at) = polygons_cross(&shapes[i].polygon, &shapes[j].polygon)
            {
                return Err(ChainError::Crossing {
                    first: shapes[i].description.clone(),
                    second: shapes[j].description.clone(),
                    at,
                });
            }
        }
    }
    // parents[i]: the shapes i lies inside.
    let mut parents: Vec<Vec<usize>> = vec![Vec::new(); n];
    for i in 0..n {
        for j in 0..n {
            if i != j
                && shapes[j].area > shapes[i].area
                && shapes[i].boxes_overlap(&shapes[j])
                && shapes[j].contains(shapes[i].sample)
            {
                parents[i].push(j);
            }
        }
    }
    if let Some(i) = (0..n).find(|&i| parents[i].len() >= 2) {
        let mut ps = parents[i].clone();
        ps.sort_by(|&a, &b| shapes[a].area.total_cmp(&shapes[b].area));
        return Err(ChainError::Nested {
            inner: shapes[i].description.clone(),
            middle: shapes[ps[0]].description.clone(),
            outer: shapes[ps[ps.len() - 1]].description.clone(),
        });
    }
    let mut warnings = Vec::new();
    let nested = parents.iter().any(|p| !p.is_empty());
    let outline_index = if nested {
        let roots: Vec<usize> = (0..n).filter(|&i| parents[i].is_empty()).collect();
        if roots.len() > 1 {
            return Err(ChainError::SeveralOutlines {
                shapes: roots
                    .iter()
                    .map(|&i| shapes[i].description.clone())
                    .collect(),
            });
        }
        Some(roots[0])
    } else if n == 1 {
        Some(0)
    } else {
        if n > 1 {
            warnings.push(format!(
                "no closed shape holds the others, so all {n} are taken as holes in a plate that \
                 is not drawn (no outline is cut); if they are separate parts, draw one part per \
                 drawing"
            ));
        }
        None
    };

    let outline = match outline_index {
        Some(i) => {
            let s = shapes.remove(i);
            match s.kind {
                ShapeKind::Contour(c) => Some(c),
                ShapeKind::Ellipse(..) => {
                    if nested {
                        return Err(ChainError::EllipseOutline {
                            shape: s.description,
                        });
                    }
                    // A lone ELLIPSE is a hole (cut inside), not an outline.
                    shapes.push(s);
                    None
                }
            }
        }
        None => None,
    };

    shapes.sort_by(|a, b| {
        a.low
            .x
            .total_cmp(&b.low.x)
            .then(a.low.y.total_cmp(&b.low.y))
            .then_with(|| a.first_handle.cmp(&b.first_handle))
    });
    let holes = shapes
        .into_iter()
        .enumerate()
        .map(|(i, s)| {
            let name = format!("hole {}", i + 1);
            match s.kind {
                ShapeKind::Contour(c) => Hole {
                    name,
                    layer: c.layer.clone(),
                    shape: HoleShape::Contour(c),
                },
                ShapeKind::Ellipse(e, layer) => Hole {
                    name,
                    layer,
                    shape: HoleShape::Ellipse(e),
                },
            }
        })
        .collect();
    Ok((outline, holes, warnings))
}

/// Number of chords for an arc of radius `r` and sweep `sweep` with sagitta at most
/// [`CROSSING_CHECK_SAGITTA`]: a chord of angle φ has sagitta r(1 − cos(φ/2)).
fn chord_count(r: f64, sweep: f64) -> usize {
    let s = CROSSING_CHECK_SAGITTA;
    let step = if r <= s {
        std::f64::consts::PI
    } else {
        2.0 * (1.0 - s / r).acos()
    };
    ((sweep.abs() / step).ceil() as usize).clamp(1, 4096)
}

fn flatten_contour(c: &Contour) -> Vec<Point> {
    let mut pts = Vec::new();
    for e in &c.elements {
        match e {
            Element::Line(s) => pts.push(s.start),
            Element::Arc(a) => {
                let k = chord_count(a.radius, a.sweep);
                pts.extend((0..k).map(|i| a.point_at(i as f64 / k as f64)));
            }
        }
    }
    pts
}

/// Chords of the ellipse, sized by its largest radius of curvature a²/b (so the sagitta
/// bound holds everywhere).
fn flatten_ellipse(e: &Ellipse) -> Vec<Point> {
    let k = chord_count(e.a() * e.a() / e.b(), std::f64::consts::TAU).max(8);
    (0..k)
        .map(|i| e.point(i as f64 * std::f64::consts::TAU / k as f64))
        .collect()
}

/// A point where the boundaries of two closed polygons cross or touch, if any.
fn polygons_cross(p: &[Point], q: &[Point]) -> Option<Point> {
    let (qlo, qhi) = bounds_of(q)?;
    let (np, nq) = (p.len(), q.len());
    for i in 0..np {
        let (a, b) = (p[i], p[(i + 1) % np]);
        if a.x.max(b.x) < qlo.x
            || a.x.min(b.x) > qhi.x
            || a.y.max(b.y) < qlo.y
            || a.y.min(b.y) > qhi.y
        {
            continue;
        }
        for j in 0..nq {
            let (c, d) = (q[j], q[(j + 1) % nq]);
            if let Some(x) = segments_meet(a, b, c, d) {
                return Some(x);
            }
        }
    }
    None
}

/// Where segments ab and cd meet (touching counts), if they do.
fn segments_meet(a: Point, b: Point, c: Point, d: Point) -> Option<Point> {
    if a.x.max(b.x) < c.x.min(d.x)
        || c.x.max(d.x) < a.x.min(b.x)
        || a.y.max(b.y) < c.y.min(d.y)
        || c.y.max(d.y) < a.y.min(b.y)
    {
        return None;
    }
    let (r, s) = (b - a, d - c);
    let denom = r.cross(s);
    let ac = c - a;
    if denom == 0.0 {
        // Parallel: they meet only if collinear and overlapping.
        if ac.cross(r) != 0.0 {
            return None;
        }
        let rr = r.dot(r);
        if rr == 0.0 {
            return None;
        }
        let (t0, t1) = (ac.dot(r) / rr, (d - a).dot(r) / rr);
        let (lo, hi) = (t0.min(t1), t0.max(t1));
        if hi < 0.0 || lo > 1.0 {
            return None;
        }
        return Some(a + r * lo.max(0.0));
    }
    let t = ac.cross(s) / denom;
    let u = ac.cross(r) / denom;
    if (0.0..=1.0).contains(&t) && (0.0..=1.0).contains(&u) {
        Some(a + r * t)
    } else {
        None
    }
}

#[cfg(test)]
#[path = "build_tests.rs"]
mod tests;
