//! Drawing units: the DXF `$INSUNITS` codes and where the drawing's units came from.
//!
//! `$INSUNITS` codes (DXF reference, HEADER section): 1 inch, 2 foot, 4 millimetre,
//! 5 centimetre, 6 metre. Other non-zero codes (miles, micro-inches, ångström, …) are refused
//! by [`super::read_dxf`]: they are not units a part drawing for a cutting machine is drawn in,
//! and a wrong guess would scale the part by orders of magnitude.

pub use crate::geom::units::{Units, UnknownUnits};
use serde::Serialize;

// The DXF codes belong to reading a DXF file, so this method lives here rather than in `geom`.
impl Units {
    /// The unit named by a `$INSUNITS` code: `Ok(None)` for 0 (unitless), `Err` with the code's
    /// name for a known but unsupported unit, `Err` with "unknown" for a code the DXF reference
    /// does not define.
    pub(crate) fn from_insunits(code: i64) -> Result<Option<Units>, &'static str> {
        match code {
            0 => Ok(None),
            1 => Ok(Some(Units::Inches)),
            2 => Ok(Some(Units::Feet)),
            4 => Ok(Some(Units::Millimetres)),
            5 => Ok(Some(Units::Centimetres)),
            6 => Ok(Some(Units::Metres)),
            3 => Err("miles"),
            7 => Err("kilometres"),
            8 => Err("micro-inches"),
            9 => Err("mils"),
            10 => Err("yards"),
            11 => Err("ångström"),
            12 => Err("nanometres"),
            13 => Err("micrometres"),
            14 => Err("decimetres"),
            15 => Err("decametres"),
            16 => Err("hectometres"),
            17 => Err("gigametres"),
            18 => Err("astronomical units"),
            19 => Err("light years"),
            20 => Err("parsecs"),
            21 => Err("US survey feet"),
            22 => Err("US survey inches"),
            23 => Err("US survey yards"),
            24 => Err("US survey miles"),
            _ => Err("an unknown unit"),
        }
    }
}

/// Where the drawing's units came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum UnitsSource {
    /// The file's `$INSUNITS` header variable (a user flag, if given, agreed with it).
    Header,
    /// The user's flag: the file's header gave no units.
    UserFlag,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn insunits_codes_follow_the_dxf_reference() {
        // DXF reference, HEADER section, $INSUNITS: 0 unitless, 1 inches, 4 millimetres.
        assert_eq!(Units::from_insunits(0), Ok(None));
        assert_eq!(Units::from_insunits(1), Ok(Some(Units::Inches)));
        assert_eq!(Units::from_insunits(4), Ok(Some(Units::Millimetres)));
        assert_eq!(Units::from_insunits(6), Ok(Some(Units::Metres)));
        assert_eq!(Units::from_insunits(3), Err("miles"));
        assert!(Units::from_insunits(99).is_err());
    }
}
