//! What was read but not used, for the user: one note per entity type and layer, naming a few
//! of the entities and saying why they were left out.

use super::entity::describe;
use super::raw::RawRecord;

pub(super) fn describe_raw(r: &RawRecord) -> String {
    let layer = r.layer.as_deref().unwrap_or("0");
    match &r.handle {
        Some(h) => describe(&r.kind, layer, h, r.line),
        None => describe(&r.kind, layer, &format!("L{}", r.line), r.line),
    }
}

pub(super) fn label(handle: &str, line: usize) -> String {
    if handle.starts_with('L') {
        format!("line {line}")
    } else {
        format!("handle {handle} at line {line}")
    }
}

pub(super) fn label_raw(r: &RawRecord) -> String {
    match &r.handle {
        Some(h) => label(h, r.line),
        None => label("L", r.line),
    }
}

/// Notes grouped by entity type and layer, in order of first appearance.
#[derive(Default)]
pub(super) struct Notes {
    groups: Vec<(String, String, Vec<String>)>,
}

impl Notes {
    /// How many entities of a group are named in the note.
    const SHOWN: usize = 5;

    pub(super) fn add(&mut self, kind: &str, layer: &str, label: &str) {
        match self
            .groups
            .iter_mut()
            .find(|(k, l, _)| k == kind && l == layer)
        {
            Some((_, _, labels)) => labels.push(label.to_string()),
            None => {
                self.groups
                    .push((kind.to_string(), layer.to_string(), vec![label.to_string()]))
            }
        }
    }

    pub(super) fn finish(self) -> Vec<String> {
        self.groups
            .into_iter()
            .map(|(kind, layer, labels)| {
                let n = labels.len();
                let mut shown = labels[..n.min(Self::SHOWN)].join(", ");
                if n > Self::SHOWN {
                    shown.push_str(&format!(" and {} more", n - Self::SHOWN));
                }
                let what = if n == 1 {
                    format!("1 {kind} entity")
                } else {
                    format!("{n} {kind} entities")
                };
                format!("ignored {what} on layer {layer} ({shown}): {}", hint(&kind))
            })
            .collect()
    }
}

fn hint(kind: &str) -> &'static str {
    let base = kind.split(' ').next().unwrap_or(kind);
    if kind.contains("paper space") {
        "only model space is read"
    } else if kind.contains("zero") || kind.contains("fewer than") {
        "degenerate, it encloses and joins nothing"
    } else {
        match base {
            "INSERT" => {
                "blocks are not expanded; explode the block in the CAD program if its geometry is to be cut"
            }
            "SPLINE" => {
                "splines are not read; convert them to arcs or a polyline in the CAD program if they are to be cut"
            }
            "HATCH" | "SOLID" | "TRACE" | "WIPEOUT" => {
                "fills are not cut; draw the boundary with lines, arcs or polylines"
            }
            "TEXT" | "MTEXT" | "DIMENSION" | "LEADER" | "TOLERANCE" | "ATTRIB" | "ATTDEF"
            | "RTEXT" | "ARCALIGNEDTEXT" => "annotation is not cut",
            "POLYLINE" => "polygon and polyface meshes are not read",
            _ => "conicut reads LINE, ARC, CIRCLE, LWPOLYLINE, POLYLINE, ELLIPSE and POINT only",
        }
    }
}
