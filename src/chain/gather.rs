//! Gathering the drawing's entities per layer: open pieces, closed loops and full ellipses.

use super::ChainOptions;
use super::error::{ChainError, fmt_point};
use super::join::{Piece, snap_loop};
use crate::geom::Element;
use crate::geom::{ArcSegment, Ellipse, Point, Segment};
use crate::read::{Drawing, Entity, EntityKind};

/// The entities of every layer not a construction layer, per layer in order of first appearance
/// (names compared case-insensitively), and a description of each POINT entity (not used).
pub(super) fn gather(
    drawing: &Drawing,
    opts: &ChainOptions,
    max_gap: f64,
) -> Result<(Vec<LayerStuff>, Vec<String>), ChainError> {
    let bay_key = opts.bay_layer.to_lowercase();
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
        add_entity(&mut layers[idx], e, max_gap, &mut points)?;
    }
    Ok((layers, points))
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
    key: String,
    pub(super) name: String,
    pub(super) is_bay: bool,
    /// Open pieces, to be joined.
    pub(super) pieces: Vec<Piece>,
    /// Pieces that close by themselves (circles, closed polylines), then the joined loops.
    pub(super) loops: Vec<Piece>,
    /// Full ellipses, with their handles.
    pub(super) ellipses: Vec<(Ellipse, String)>,
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
