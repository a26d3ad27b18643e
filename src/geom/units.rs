//! Length units: the one place the inch and the foot are defined.
//!
//! Millimetres are the working unit everywhere (see the module notes in [`crate::geom`]); a file
//! written or read in inches converts at its edge with [`MM_PER_INCH`].

use serde::Serialize;
use std::fmt;
use std::str::FromStr;

/// Millimetres per inch (exact by definition, international yard and pound agreement of 1959).
pub const MM_PER_INCH: f64 = 25.4;

/// Millimetres per foot (12 inches, exact; written out because 12.0 * 25.4 rounds to
/// 304.79999999999995 in f64).
pub const MM_PER_FOOT: f64 = 304.8;

/// A length unit a drawing, job file or point list is written in (a program is written in
/// millimetres or inches only: `post::ProgramUnits`).
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
            Units::Feet => MM_PER_FOOT,
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

    /// Converts a length in this unit to millimetres.
    pub fn to_mm(self, value: f64) -> f64 {
        value * self.mm_per_unit()
    }

    /// Converts a length in millimetres to this unit.
    pub fn from_mm(self, mm: f64) -> f64 {
        mm / self.mm_per_unit()
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
        // International inch, exact by definition (1959 agreement): docs/sources.md.
        assert_eq!(Units::Inches.mm_per_unit(), 25.4);
        assert_eq!(Units::Feet.mm_per_unit(), 304.8);
        assert_eq!(Units::Inches.to_mm(2.0), 50.8);
        assert_eq!(Units::Inches.from_mm(50.8), 2.0);
    }

    #[test]
    fn serializes_as_symbol() {
        assert_eq!(
            serde_json::to_string(&Units::Inches).unwrap(),
            "\"in\"".to_string()
        );
    }
}
