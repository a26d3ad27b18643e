//! A copy of the drawing for the drawing office (`--dxf-out`): the drawing as read, with every
//! solved ellipse added as an ELLIPSE entity and its centre as a POINT, on a layer of their own
//! ([`SOLVED_LAYER`]), in the drawing's own units and coordinates (the work zero's shift taken
//! back off). It is written as R2000 at the least: R12 has no ELLIPSE entity, and the `dxf`
//! crate would otherwise write its R12 default and drop it. The header keeps `$INSUNITS`; the
//! parts of the original the reader leaves out (its other header variables and tables) are not
//! copied.

use super::JobError;
use crate::read::{self, ReadOptions};
use crate::report::Report;
use dxf::entities::{Entity, EntityType, ModelPoint};
use dxf::enums::{AcadVersion, Units as DxfUnits};
use dxf::tables::Layer;

/// The layer the solved ellipses and their centres go on.
pub const SOLVED_LAYER: &str = "CONICUT-SOLVED";

/// The drawing `dxf` (read with `s`'s file name and units) with the solved ellipses of `report`
/// added, as DXF text.
pub fn solved_drawing(
    dxf_bytes: &[u8],
    s: &crate::settings::JobSettings,
    report: &Report,
) -> Result<String, JobError> {
    let units = read::read_dxf(
        dxf_bytes,
        &ReadOptions {
            file_name: &s.file_name,
            units: s.units,
        },
    )?
    .units;
    let mut d = read::load_for_copy(dxf_bytes, &s.file_name)?;
    let per_mm = 1.0 / units.mm_per_unit();
    let shift = report.work_zero.shift_mm;
    if d.header.version < AcadVersion::R2000 {
        d.header.version = AcadVersion::R2000;
    }
    d.header.default_drawing_units = match units {
        read::Units::Inches => DxfUnits::Inches,
        read::Units::Feet => DxfUnits::Feet,
        read::Units::Centimetres => DxfUnits::Centimeters,
        read::Units::Metres => DxfUnits::Meters,
        read::Units::Millimetres => DxfUnits::Millimeters,
    };
    if !d
        .layers()
        .any(|l| l.name.eq_ignore_ascii_case(SOLVED_LAYER))
    {
        d.add_layer(Layer {
            name: SOLVED_LAYER.into(),
            ..Default::default()
        });
    }
    for f in report.features.iter().filter(|f| f.source.is_some()) {
        let Some(e) = &f.ellipse else { continue };
        // Back to the drawing's frame and units.
        let cx = (e.centre_mm[0] - shift[0]) * per_mm;
        let cy = (e.centre_mm[1] - shift[1]) * per_mm;
        let (sin, cos) = e.angle_deg.to_radians().sin_cos();
        let a = e.semi_major_mm * per_mm;
        let ellipse = dxf::entities::Ellipse {
            center: dxf::Point::new(cx, cy, 0.0),
            major_axis: dxf::Vector::new(a * cos, a * sin, 0.0),
            minor_axis_ratio: e.semi_minor_mm / e.semi_major_mm,
            start_parameter: 0.0,
            end_parameter: std::f64::consts::TAU,
            ..Default::default()
        };
        let mut entity = Entity::new(EntityType::Ellipse(ellipse));
        entity.common.layer = SOLVED_LAYER.into();
        d.add_entity(entity);
        let mut centre = Entity::new(EntityType::ModelPoint(ModelPoint::new(dxf::Point::new(
            cx, cy, 0.0,
        ))));
        centre.common.layer = SOLVED_LAYER.into();
        d.add_entity(centre);
    }
    let mut out = Vec::new();
    d.save(&mut out).map_err(|e| JobError::ReadBack {
        file: s.file_name.clone(),
        problem: format!("the copy of the drawing could not be written: {e}"),
    })?;
    Ok(String::from_utf8_lossy(&out).into_owned())
}
