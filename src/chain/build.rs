//! [`build_part`]: from the drawing's entities to the part's outline, holes and bays.

use super::bay::make_bay;
use super::classify::{Shape, classify};
use super::crossing::{flatten_contour, polygons_cross};
use super::error::{ChainError, OpenContour, fmt_point};
use super::gather::{LayerStuff, gather, partial_ellipses};
use super::join::{Piece, join};
use super::{Bay, Part};
use crate::geom::{Bounds, BoxGrid, Contour, Element, Point, bounds_of_elements};
use crate::read::Drawing;

/// The layer that holds bays unless the user names another. Matched case-insensitively, as DXF
/// layer names are.
pub const DEFAULT_BAY_LAYER: &str = "OPENING-BAYS";

/// Default largest gap closed, mm (the `--gap-tolerance` flag): piece ends this close or closer
/// are joined.
///
/// 0.01 mm is ten times the usual 0.001 mm resolution of a CNC program yet far below a laser
/// kerf or the smallest end mill a bay is cut with (common practice); CAD exports are
/// normally exact to 1e-6 mm or better, so a larger gap is a drawing error worth showing.
pub const DEFAULT_MAX_GAP: f64 = 0.01;

/// How far a flattened arc or ellipse may lie inside the true curve (mm) in the crossing
/// check between contours: the sagitta of each chord. Crossings by less than this may be missed.
pub const CROSSING_CHECK_SAGITTA: f64 = 1e-3;

/// Options for [`build_part`].
#[derive(Debug, Clone, PartialEq)]
pub struct ChainOptions {
    /// Ends at most this far apart (mm) are joined; must be finite and not negative.
    pub max_gap: f64,
    /// The layer holding bays (compared case-insensitively).
    pub bay_layer: String,
    /// Layers of construction geometry that is neither cut nor a bay (probe points, guide lines
    /// named by a job file; compared case-insensitively): their entities are left out.
    pub construction_layers: Vec<String>,
    /// When given, only these layers' geometry is cut (compared case-insensitively); the bay
    /// layer and the construction layers are read as always. A layer named here is cut even
    /// when the drawing hides it.
    pub cut_layers: Option<Vec<String>>,
    /// Layers whose geometry is never cut (compared case-insensitively).
    pub skip_layers: Vec<String>,
}

impl Default for ChainOptions {
    fn default() -> Self {
        ChainOptions {
            max_gap: DEFAULT_MAX_GAP,
            bay_layer: DEFAULT_BAY_LAYER.to_string(),
            construction_layers: Vec::new(),
            cut_layers: None,
            skip_layers: Vec::new(),
        }
    }
}

/// Joins the drawing's pieces into closed contours and sorts them into the part.
///
/// * Per layer (layer names compared case-insensitively), LINEs, ARCs and open polylines are
///   joined end to end where ends lie within `max_gap`; shared points are snapped. Closed
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
/// * Geometry on a layer the drawing hides (frozen, off, not plotted), on a layer named in
///   `skip_layers`, or on a layer not named in `cut_layers` (when given) is not cut: each such
///   layer is listed in the part's notes with its entities' handles. The bay layer is read
///   whatever its state. Every layer with entities is listed in [`Part::layers`] with its role.
pub fn build_part(drawing: &Drawing, opts: &ChainOptions) -> Result<Part, ChainError> {
    let max_gap = opts.max_gap;
    if !(max_gap.is_finite() && max_gap >= 0.0) {
        return Err(ChainError::BadMaxGap(max_gap));
    }
    let mut warnings = Vec::new();
    let (mut layers, points, uses, mut notes) = gather(drawing, opts, max_gap)?;
    notes.extend(partial_ellipses(&layers, max_gap)?);
    warnings.extend(points_warning(&points));
    warnings.extend(join_layers(&mut layers, max_gap)?);
    let (bay_loops, shapes) = sort_loops(layers, max_gap)?;
    let bays = make_bays(bay_loops, max_gap)?;
    let (outline, holes, mut more) = classify(shapes)?;
    warnings.append(&mut more);
    if let Some(outline) = &outline {
        warnings.extend(bays_outside(outline, &bays));
    }
    Ok(Part {
        outline,
        holes,
        bays,
        warnings,
        notes,
        layers: uses,
    })
}

/// The warning for POINT entities, which are not used yet.
fn points_warning(points: &[String]) -> Option<String> {
    if points.is_empty() {
        return None;
    }
    Some(format!(
        "ignored {} POINT entit{} (points are not used yet): {}",
        points.len(),
        if points.len() == 1 { "y" } else { "ies" },
        points.join("; ")
    ))
}

/// Joins every layer's pieces into loops; collects all open runs before failing. A layer other
/// than the bay layer that holds no closed shape at all, and whose open runs are all far from
/// closing (each run's ends further apart than [`NEARLY_CLOSED`] of its length: construction
/// lines, leaders), is not cut: its runs give a warning, with the nearest gap, instead of an
/// error. Open runs on a layer that also holds closed shapes, on the bay layer, or that nearly
/// close (a contour with a gap) are refused as before.
fn join_layers(layers: &mut [LayerStuff], max_gap: f64) -> Result<Vec<String>, ChainError> {
    let mut open = Vec::new();
    let mut warnings = Vec::new();
    for layer in layers {
        let joined = join(&layer.pieces, max_gap).map_err(|b| ChainError::Branch {
            layer: layer.name.clone(),
            at: b.at,
            handles: b.handles,
        })?;
        layer.loops.extend(joined.loops);
        if joined.open.is_empty() {
            continue;
        }
        let nearly_closed = joined
            .open
            .iter()
            .any(|r| r.ends[0].distance(r.ends[1]) < NEARLY_CLOSED * r.length);
        let loose: Vec<Point> = joined.open.iter().flat_map(|r| r.ends).collect();
        let grid = BoxGrid::new(loose.iter().map(|&p| Bounds::at(p)).collect());
        let runs: Vec<OpenContour> = joined
            .open
            .into_iter()
            .enumerate()
            .map(|(r, run)| OpenContour {
                layer: layer.name.clone(),
                handles: run.handles,
                pieces: run.pieces,
                gaps: (0..2)
                    .map(|i| nearest_loose_end(&loose, &grid, 2 * r + i))
                    .collect(),
            })
            .collect();
        let closed_here = !layer.loops.is_empty() || !layer.ellipses.is_empty();
        if layer.is_bay || closed_here || nearly_closed {
            open.extend(runs);
        } else {
            warnings.push(open_layer_warning(&layer.name, &runs, max_gap));
            layer.pieces.clear();
        }
    }
    if !open.is_empty() {
        return Err(ChainError::Open {
            contours: open,
            max_gap,
        });
    }
    Ok(warnings)
}

/// An open run whose ends are closer than this share of its length looks like a contour with a
/// gap, not like construction geometry.
pub const NEARLY_CLOSED: f64 = 0.1;

/// The warning for a layer of open pieces only.
fn open_layer_warning(layer: &str, runs: &[OpenContour], max_gap: f64) -> String {
    let handles: Vec<&str> = runs
        .iter()
        .flat_map(|r| r.handles.iter().map(String::as_str))
        .collect();
    let shown = handles.len().min(12);
    let more = if handles.len() > shown {
        format!(" and {} more", handles.len() - shown)
    } else {
        String::new()
    };
    let nearest = runs
        .iter()
        .flat_map(|r| r.gaps.iter())
        .filter_map(|(end, near)| near.map(|(_, d)| (*end, d)))
        .min_by(|a, b| a.1.total_cmp(&b.1));
    let gap = nearest.map_or(String::new(), |(at, d)| {
        format!("; its nearest gap is {d:.3} mm, at {}", fmt_point(at))
    });
    format!(
        "layer {layer} holds only open pieces ({} run{}: handles {}{more}), so nothing on it is \
         cut{gap}. If it is meant to be cut, close its gaps in the CAD program or raise \
         --gap-tolerance (now {max_gap} mm); if it is construction or annotation, \
         --skip-layers {layer} says so",
        runs.len(),
        if runs.len() == 1 { "" } else { "s" },
        handles[..shown].join(", ")
    )
}

/// The loose end `me` with the nearest other loose end and its distance, through a grid of
/// the loose ends.
fn nearest_loose_end(loose: &[Point], grid: &BoxGrid, me: usize) -> (Point, Option<(Point, f64)>) {
    let end = loose[me];
    let mut best: Option<usize> = None;
    let d = grid.nearest(end, |k| {
        if k == me {
            f64::INFINITY
        } else {
            let d = loose[k].distance(end);
            if best.is_none_or(|b| d < loose[b].distance(end)) {
                best = Some(k);
            }
            d
        }
    });
    (end, best.filter(|_| d.is_finite()).map(|k| (loose[k], d)))
}

/// A loop on the bay layer, with its layer's name.
type BayLoop = (Piece, String);

/// The loops of the bay layer (with their layer names), and every cut layer's loops and
/// ellipses as shapes (contours made counter-clockwise).
fn sort_loops(
    layers: Vec<LayerStuff>,
    max_gap: f64,
) -> Result<(Vec<BayLoop>, Vec<Shape>), ChainError> {
    let mut bay_loops: Vec<BayLoop> = Vec::new();
    let mut shapes: Vec<Shape> = Vec::new();
    for layer in layers {
        if layer.is_bay {
            bay_loops.extend(layer.loops.into_iter().map(|p| (p, layer.name.clone())));
            continue;
        }
        for piece in layer.loops {
            shapes.push(cut_shape(piece, &layer.name, max_gap)?);
        }
        for (e, h) in layer.ellipses {
            shapes.push(Shape::from_ellipse(e, layer.name.clone(), h));
        }
    }
    Ok((bay_loops, shapes))
}

/// A loop on a cut layer as a counter-clockwise contour; refused when it encloses no area.
fn cut_shape(piece: Piece, layer: &str, max_gap: f64) -> Result<Shape, ChainError> {
    let contour = Contour::new(piece.elements, layer, piece.handles.clone()).map_err(|error| {
        ChainError::Unclosed {
            layer: layer.to_string(),
            handles: piece.handles,
            error,
        }
    })?;
    let area = contour.signed_area();
    let perimeter = contour.length();
    if area.abs() <= max_gap.max(1e-9) * perimeter {
        return Err(ChainError::NoArea {
            layer: contour.layer().to_string(),
            handles: contour.handles().to_vec(),
            at: contour.start_point().unwrap_or(Point::ORIGIN),
        });
    }
    let contour = if area < 0.0 {
        contour.reversed()
    } else {
        contour
    };
    Ok(Shape::from_contour(contour))
}

/// The bay loops in order (see [`order_key`]) made into bays named `bay 1`, `bay 2`, ….
fn make_bays(mut bay_loops: Vec<BayLoop>, max_gap: f64) -> Result<Vec<Bay>, ChainError> {
    bay_loops.sort_by(|a, b| order_key(&a.0.elements, &a.0.handles, &b.0.elements, &b.0.handles));
    let mut bays: Vec<Bay> = Vec::new();
    for (i, (piece, layer)) in bay_loops.iter().enumerate() {
        bays.push(make_bay(
            &format!("bay {}", i + 1),
            layer,
            &piece.elements,
            &piece.handles,
            max_gap,
        )?);
    }
    Ok(bays)
}

/// A warning for each bay not inside the outline.
fn bays_outside(outline: &Contour, bays: &[Bay]) -> Vec<String> {
    let poly = flatten_contour(outline);
    let mut warnings = Vec::new();
    for bay in bays {
        let outside = bay.corners().iter().find(|&&c| !outline.contains(c));
        let crossing = polygons_cross(bay.corners(), &poly);
        if let Some(c) = outside {
            warnings.push(format!(
                "{} (layer {}) is not inside the outline: its corner {} lies outside it",
                bay.name(),
                bay.layer(),
                fmt_point(*c)
            ));
        } else if let Some(p) = crossing {
            warnings.push(format!(
                "{} (layer {}) is not inside the outline: the outline crosses it near {}",
                bay.name(),
                bay.layer(),
                fmt_point(p)
            ));
        }
    }
    warnings
}

/// Order by the lower-left corner of the bounding box (x, then y), then by first handle.
fn order_key(a: &[Element], ha: &[String], b: &[Element], hb: &[String]) -> std::cmp::Ordering {
    let lo = |els: &[Element]| bounds_of_elements(els).map_or(Point::ORIGIN, |b| b.min);
    let (pa, pb) = (lo(a), lo(b));
    pa.x.total_cmp(&pb.x)
        .then(pa.y.total_cmp(&pb.y))
        .then_with(|| ha.first().cmp(&hb.first()))
}

#[cfg(test)]
#[path = "build_tests.rs"]
mod tests;
