//! Gathering the drawing's entities per layer: open pieces, closed loops and full ellipses.

use super::ChainOptions;
use super::contour::{LayerRole, LayerUse};
use super::error::{ChainError, fmt_point};
use super::join::{Piece, snap_loop};
use crate::geom::Element;
use crate::geom::{ArcSegment, Bounds, BoxGrid, Ellipse, Point, Segment};
use crate::read::{Drawing, Entity, EntityKind};
use std::collections::{HashMap, HashSet};

/// The entities of every layer that is cut or holds the bays, per layer in order of first
/// appearance (names compared case-insensitively); a description of each POINT entity (not
/// used); every layer's use; and a note for each layer read but not cut.
pub(super) fn gather(
    drawing: &Drawing,
    opts: &ChainOptions,
    max_gap: f64,
) -> Result<Gathered, ChainError> {
    let bay_key = opts.bay_layer.to_lowercase();
    let lower =
        |names: &[String]| -> HashSet<String> { names.iter().map(|n| n.to_lowercase()).collect() };
    let construction = lower(&opts.construction_layers);
    let skip = lower(&opts.skip_layers);
    let cut_only = opts.cut_layers.as_deref().map(lower);
    let hidden: HashMap<String, &'static str> = drawing
        .layers
        .iter()
        .filter_map(|l| l.hidden().map(|why| (l.name.to_lowercase(), why)))
        .collect();
    // The role of a layer, and why it is not cut.
    let role_of = |key: &str| -> (LayerRole, Option<&'static str>) {
        if key == bay_key {
            (LayerRole::Bays, None)
        } else if construction.contains(key) {
            (LayerRole::Construction, None)
        } else if skip.contains(key) {
            (LayerRole::NotCut, Some("skipped"))
        } else if let Some(only) = &cut_only {
            if only.contains(key) {
                (LayerRole::Cut, None)
            } else {
                (LayerRole::NotCut, Some("not in the cut list"))
            }
        } else if let Some(why) = hidden.get(key) {
            (LayerRole::NotCut, Some(*why))
        } else {
            (LayerRole::Cut, None)
        }
    };
    let mut layers: Vec<LayerStuff> = Vec::new();
    let mut uses: Vec<LayerUse> = Vec::new();
    let mut not_cut: Vec<Vec<String>> = Vec::new();
    let mut index: HashMap<String, usize> = HashMap::new();
    let mut points: Vec<String> = Vec::new();
    for e in &drawing.entities {
        let key = e.layer.to_lowercase();
        let k = *index.entry(key.clone()).or_insert_with(|| {
            let (role, reason) = role_of(&key);
            uses.push(LayerUse {
                name: e.layer.clone(),
                role,
                reason: reason.map(str::to_string),
                entities: 0,
            });
            not_cut.push(Vec::new());
            layers.push(LayerStuff {
                is_bay: role == LayerRole::Bays,
                name: e.layer.clone(),
                pieces: Vec::new(),
                loops: Vec::new(),
                ellipses: Vec::new(),
                partials: Vec::new(),
            });
            uses.len() - 1
        });
        uses[k].entities += 1;
        match uses[k].role {
            LayerRole::Cut | LayerRole::Bays => {
                add_entity(&mut layers[k], e, max_gap, &mut points)?;
            }
            LayerRole::Construction => {}
            LayerRole::NotCut => {
                not_cut[k].push(format!("{} {}", e.kind.type_name(), e.handle));
            }
        }
    }
    let notes = uses
        .iter()
        .zip(&not_cut)
        .filter(|(_, list)| !list.is_empty())
        .map(|(u, list)| not_cut_note(u, list))
        .collect();
    // Layers that are not cut hold nothing to join.
    let layers = layers
        .into_iter()
        .zip(&uses)
        .filter(|(_, u)| matches!(u.role, LayerRole::Cut | LayerRole::Bays))
        .map(|(l, _)| l)
        .collect();
    Ok((layers, points, uses, notes))
}

/// What [`gather`] returns.
pub(super) type Gathered = (Vec<LayerStuff>, Vec<String>, Vec<LayerUse>, Vec<String>);

/// The note for a layer read but not cut: why, and its entities (the first 12 by type and
/// handle, then how many more).
fn not_cut_note(u: &LayerUse, entities: &[String]) -> String {
    let why = match u.reason.as_deref() {
        Some("skipped") => "named in the layers to skip".to_string(),
        Some("not in the cut list") => "not among the layers to cut".to_string(),
        Some(state) => format!("{state} in the drawing"),
        None => "not cut".to_string(),
    };
    let shown = entities.len().min(12);
    let more = if entities.len() > shown {
        format!(" and {} more", entities.len() - shown)
    } else {
        String::new()
    };
    format!(
        "layer {} is {why}, so its {} entit{} {} not cut: {}{more}",
        u.name,
        entities.len(),
        if entities.len() == 1 { "y" } else { "ies" },
        if entities.len() == 1 { "is" } else { "are" },
        entities[..shown].join(", ")
    )
}

/// One entity added to its layer (a POINT only described in `points`).
fn add_entity(
    layer: &mut LayerStuff,
    e: &Entity,
    max_gap: f64,
    points: &mut Vec<String>,
) -> Result<(), ChainError> {
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
        EntityKind::Circle { centre, radius } => layer.loops.push(Piece {
            elements: vec![Element::Arc(ArcSegment::circle(*centre, *radius))],
            handles: vec![h],
        }),
        EntityKind::Polyline { vertices, closed } => {
            add_polyline(layer, vertices, *closed, &h, max_gap);
        }
        EntityKind::Ellipse {
            ellipse,
            start,
            end,
        } => {
            if !e.kind.is_full_ellipse() {
                // Decided once the layer's pieces are known (`partial_ellipses`).
                layer.partials.push(PartialArc {
                    handle: h,
                    ends: [ellipse.point(*start), ellipse.point(*end)],
                });
                return Ok(());
            }
            if layer.is_bay {
                return Err(ChainError::EllipseOnBayLayer {
                    layer: e.layer.clone(),
                    handle: h,
                    at: ellipse.centre(),
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
    Ok(())
}

/// A polyline as a loop (closed, or its ends within `max_gap`: snapped) or an open piece; nothing
/// when it has no pieces left.
fn add_polyline(
    layer: &mut LayerStuff,
    vertices: &[(Point, f64)],
    closed: bool,
    h: &str,
    max_gap: f64,
) {
    let mut piece = polyline_piece(vertices, closed, h, max_gap, !layer.is_bay);
    if piece.elements.is_empty() {
        return;
    }
    let ends_meet = piece
        .elements
        .first()
        .zip(piece.elements.last())
        .is_some_and(|(f, l)| l.end().distance(f.start()) <= max_gap);
    if closed || (ends_meet && piece.elements.len() > 1) {
        snap_loop(&mut piece.elements);
        layer.loops.push(piece);
    } else {
        layer.pieces.push(piece);
    }
}

pub(super) struct LayerStuff {
    pub(super) name: String,
    pub(super) is_bay: bool,
    /// Open pieces, to be joined.
    pub(super) pieces: Vec<Piece>,
    /// Pieces that close by themselves (circles, closed polylines), then the joined loops.
    pub(super) loops: Vec<Piece>,
    /// Full ellipses, with their handles.
    pub(super) ellipses: Vec<(Ellipse, String)>,
    /// Partial ellipses (elliptical arcs), which no contour can hold.
    pub(super) partials: Vec<PartialArc>,
}

/// An ELLIPSE entity that is only part of an ellipse: its handle and end points.
pub(super) struct PartialArc {
    handle: String,
    ends: [Point; 2],
}

/// The partial ellipses of every layer: one whose ends meet another piece's end (within
/// `max_gap`) belongs to a contour, which conicut cannot cut ([`ChainError::PartialEllipse`]);
/// one that meets nothing is a drawing's annotation or construction and is listed in a note,
/// not cut. The ends are looked up through a grid of the layer's open pieces' ends.
pub(super) fn partial_ellipses(
    layers: &[LayerStuff],
    max_gap: f64,
) -> Result<Vec<String>, ChainError> {
    let mut notes = Vec::new();
    for layer in layers.iter().filter(|l| !l.partials.is_empty()) {
        let ends: Vec<Point> = layer
            .pieces
            .iter()
            .filter_map(|p| Some([p.elements.first()?.start(), p.elements.last()?.end()]))
            .flatten()
            .chain(layer.partials.iter().flat_map(|a| a.ends))
            .collect();
        let grid = BoxGrid::new(ends.iter().map(|&p| Bounds::at(p)).collect());
        let own = ends.len() - 2 * layer.partials.len();
        let mut near = Vec::new();
        for (k, arc) in layer.partials.iter().enumerate() {
            let mine = [own + 2 * k, own + 2 * k + 1];
            let joined = arc.ends.iter().any(|&p| {
                grid.near(p, max_gap, &mut near);
                near.iter()
                    .any(|j| !mine.contains(j) && ends[*j].distance(p) <= max_gap)
            });
            if joined {
                return Err(ChainError::PartialEllipse {
                    layer: layer.name.clone(),
                    handle: arc.handle.clone(),
                    at: arc.ends[0],
                });
            }
            notes.push(format!(
                "layer {}: the ELLIPSE {} is only part of an ellipse and joins nothing, so it is \
                 not cut (a closed shape is needed for a cut)",
                layer.name, arc.handle
            ));
        }
    }
    Ok(notes)
}

/// The elements of a polyline. Zero-length pieces (consecutive vertices at most 1e-9 mm apart)
/// are dropped on cut layers and kept on the bay layer (where they are reported); a closed
/// polyline's last vertex repeating its first (within `max_gap`) is dropped in either case.
fn polyline_piece(
    vertices: &[(Point, f64)],
    closed: bool,
    handle: &str,
    max_gap: f64,
    drop_zero: bool,
) -> Piece {
    let mut v = vertices.to_vec();
    if closed && v.len() > 1 {
        let (first, last) = (v[0].0, v[v.len() - 1].0);
        if first.distance(last) <= max_gap {
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
