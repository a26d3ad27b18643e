//! Drawing units and their conversion to millimetres.

use crate::geom::units::MM_PER_INCH;
use serde::Serialize;
use std::fmt;
use std::str::FromStr;

/// The length unit the drawing's coordinates are written in.
///
/// `$INSUNITS` codes (DXF reference, HEADER section): 1 inch, 2 foot, 4 millimetre,
/// 5 centimetre, 6 metre. Other non-zero codes (miles, micro-inches, ångström, …) are refused
/// by [`super::read_dxf`]: they are not units a part drawing for a cutting machine is drawn in,
/// and a wrong guess would scale the part by orders of magnitude.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Units {
    #[serde(rename = "mm")]
    Millimetres,
    #[serde(rename = "cm")]
    Centimetres,
    #[serde(rename = "m")]
    Metres,
    #[serde(rename = "in")]
    Inches,
    #[serde(rename = "ft")]
    Feet,
}

impl Units {
    /// Millimetres in one unit. The inch is exactly 25.4 mm and the foot 304.8 mm (the
    /// international yard and pound agreement of 1959).
    pub fn mm_per_unit(self) -> f64 {
        match self {
            Units::Millimetres => 1.0,
            Units::Centimetres => 10.0,
            Units::Metres => 1000.0,
            Units::Inches => MM_PER_INCH,
            Units::Feet => 304.8,
        }
    }

    /// The unit's short symbol, as accepted by [`FromStr`].
    pub fn symbol(self) -> &'static str {
        match self {
            Units::Millimetres => "mm",
            Units::Centimetres => "cm",
            Units::Metres => "m",
            Units::Inches => "in",
            Units::Feet => "ft",
        }
    }

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

impl fmt::Display for Units {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}

/// The text given for a unit was not one we know.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown unit '{0}': use mm, cm, m, in (or inch) or ft")]
pub struct UnknownUnits(pub String);

impl FromStr for Units {
    type Err = UnknownUnits;

    /// Accepts `mm`, `cm`, `m`, `in`, `inch`, `inches`, `ft`, `foot`, `feet` and the spelled-out
    /// metric names, in any case.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim().to_ascii_lowercase().as_str() {
            "mm" | "millimetre" | "millimetres" | "millimeter" | "millimeters" => {
                Ok(Units::Millimetres)
            }
            "cm" | "centimetre" | "centimetres" | "centimeter" | "centimeters" => {
                Ok(Units::Centimetres)
            }
            "m" | "metre" | "metres" | "meter" | "meters" => Ok(Units::Metres),
            "in" | "inch" | "inches" => Ok(Units::Inches),
            "ft" | "foot" | "feet" => Ok(Units::Feet),
            _ => Err(UnknownUnits(s.to_string())),
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
    fn parses_the_usual_spellings() {
        assert_eq!("mm".parse(), Ok(Units::Millimetres));
        assert_eq!("in".parse(), Ok(Units::Inches));
        assert_eq!("Inch".parse(), Ok(Units::Inches));
        assert_eq!(" ft ".parse(), Ok(Units::Feet));
        assert!("furlong".parse::<Units>().is_err());
    }

    #[test]
    fn inch_is_exactly_25_4_mm() {
        // International inch, exact by definition (1959 agreement).
        assert_eq!(Units::Inches.mm_per_unit(), 25.4);
        assert_eq!(Units::Feet.mm_per_unit(), 304.8);
    }

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

    #[test]
    fn serializes_as_symbol() {
        assert_eq!(
            serde_json::to_string(&Units::Inches).unwrap(),
            "\"in\"".to_string()
        );
    }
}
