//! How each kind of drawn element looks, defined once: the picture and the legend's samples set
//! their presentation attributes from the same [`Look`], so a sample always matches what it
//! stands for. Also the words of the legend and labels for each [`Process`].

use super::frame::num;
use svg::Node;

/// Colours of our own choosing.
pub mod palette {
    pub const BACKGROUND: &str = "#ffffff";
    pub const PART: &str = "#1d2733";
    /// Bays are construction: a light sand colour, thin and solid.
    pub const BAY: &str = "#b9a57e";
    pub const ELLIPSE: &str = "#c0531a";
    pub const TOOL: &str = "#1a62b8";
    /// Rapids: a deep teal, dashed, with arrowheads.
    pub const RAPID: &str = "#0b7f8a";
    pub const PLUNGE: &str = "#b0157a";
    pub const LEAD: &str = "#4f9a1a";
    pub const CLEARING: &str = "#8d74c4";
    pub const TAB: &str = "#e8a300";
    pub const ORIGIN: &str = "#a4161a";
    pub const TEXT: &str = "#1d2733";
}

/// How the material is cut, for the words the preview uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Process {
    /// A mill or router: a tool of some diameter, plunged into the work.
    #[default]
    Tool,
    /// A laser, plasma torch or waterjet: a kerf cut through the sheet from a pierce.
    CutThrough,
}

/// The words for one process.
#[derive(Debug, Clone, Copy)]
pub struct Words {
    /// The path the cutter's centre follows: `tool centre path`, `kerf path`.
    pub path: &'static str,
    /// The width it cuts: `width the tool cuts`, `kerf width`.
    pub band: &'static str,
    /// Where it enters: `plunge point`, `pierce point`.
    pub entry: &'static str,
    /// Its size in the subtitle: `tool diameter`, `kerf width`.
    pub size: &'static str,
}

impl Process {
    pub fn words(self) -> Words {
        match self {
            Process::Tool => Words {
                path: "tool centre path",
                band: "width the tool cuts",
                entry: "plunge point",
                size: "tool diameter",
            },
            Process::CutThrough => Words {
                path: "kerf path",
                band: "kerf width",
                entry: "pierce point",
                size: "kerf width",
            },
        }
    }
}

/// Presentation attributes of one kind of element. Unset fields are not written.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Look {
    pub stroke: Option<&'static str>,
    pub stroke_width: Option<f64>,
    /// Dash and gap lengths (mm).
    pub dash: Option<(f64, f64)>,
    pub stroke_opacity: Option<f64>,
    pub linecap: Option<&'static str>,
    pub linejoin: Option<&'static str>,
    pub fill: Option<&'static str>,
    pub fill_opacity: Option<f64>,
    /// A marker drawn at every inner vertex (`url(#…)`).
    pub marker_mid: Option<&'static str>,
    pub font_weight: Option<&'static str>,
}

impl Look {
    /// `el` with these attributes set.
    pub fn apply<T: Node>(&self, mut el: T) -> T {
        if let Some(v) = self.stroke {
            el.assign("stroke", v);
        }
        if let Some(v) = self.stroke_width {
            el.assign("stroke-width", num(v));
        }
        if let Some((on, off)) = self.dash {
            el.assign("stroke-dasharray", format!("{} {}", num(on), num(off)));
        }
        if let Some(v) = self.stroke_opacity {
            el.assign("stroke-opacity", num(v));
        }
        if let Some(v) = self.linecap {
            el.assign("stroke-linecap", v);
        }
        if let Some(v) = self.linejoin {
            el.assign("stroke-linejoin", v);
        }
        if let Some(v) = self.fill {
            el.assign("fill", v);
        }
        if let Some(v) = self.fill_opacity {
            el.assign("fill-opacity", num(v));
        }
        if let Some(v) = self.marker_mid {
            el.assign("marker-mid", v);
        }
        if let Some(v) = self.font_weight {
            el.assign("font-weight", v);
        }
        el
    }

    /// Half the stroke's width (0 without a stroke): how far the drawn line reaches either side.
    pub fn half_width(&self) -> f64 {
        match self.stroke {
            Some(_) => 0.5 * self.stroke_width.unwrap_or(1.0).max(0.0),
            None => 0.0,
        }
    }
}

/// The id of the rapid's arrowhead marker.
pub const RAPID_HEAD: &str = "rapid-head";

/// Every look of one page, from its stroke unit `u` (mm) and the tool (or kerf) diameter.
#[derive(Debug, Clone)]
pub struct Looks {
    pub outline: Look,
    pub bay: Look,
    pub ellipse: Look,
    pub band: Look,
    pub path: Look,
    pub clearing: Look,
    pub lead: Look,
    pub rapid: Look,
    pub direction: Look,
    pub plunge: Look,
    pub plunge_centre: Look,
    pub tab: Look,
    pub tab_marker: Look,
    pub work_zero: Look,
    pub leader: Look,
    pub cut_order: Look,
    pub ellipse_label: Look,
    pub hole_label: Look,
    /// Whether the path runs so close to the ellipse it is cut from that the two strokes would
    /// overlap (a kerf of a fraction of a millimetre): then the ellipse is drawn as a wide
    /// casing under a thin path, both visible.
    pub casing: bool,
}

impl Looks {
    pub fn new(u: f64, tool_diameter: f64) -> Looks {
        let line = |colour: &'static str, width: f64| Look {
            stroke: Some(colour),
            stroke_width: Some(width),
            fill: Some("none"),
            linejoin: Some("round"),
            ..Look::default()
        };
        let filled = |colour: &'static str| Look {
            fill: Some(colour),
            ..Look::default()
        };
        let radius = if tool_diameter.is_finite() {
            0.5 * tool_diameter.max(0.0)
        } else {
            0.0
        };
        // The ellipse's stroke (2u) and the path's (1.5u) overlap when the path is less than
        // their half-widths apart from the curve.
        let casing = radius < 2.0 * u;
        let (ellipse_w, path_w) = if casing {
            (3.5 * u, 0.9 * u)
        } else {
            (2.0 * u, 1.5 * u)
        };
        Looks {
            outline: line(palette::PART, 2.5 * u),
            bay: line(palette::BAY, 0.8 * u),
            ellipse: line(palette::ELLIPSE, ellipse_w),
            band: Look {
                stroke: Some(palette::TOOL),
                stroke_width: Some(2.0 * radius),
                stroke_opacity: Some(0.15),
                linecap: Some("round"),
                linejoin: Some("round"),
                fill: Some("none"),
                ..Look::default()
            },
            path: line(palette::TOOL, path_w),
            clearing: line(palette::CLEARING, 1.2 * u),
            lead: line(palette::LEAD, 1.5 * u),
            rapid: Look {
                stroke: Some(palette::RAPID),
                stroke_width: Some(u),
                dash: Some((4.0 * u, 2.5 * u)),
                fill: Some("none"),
                marker_mid: Some("url(#rapid-head)"),
                ..Look::default()
            },
            direction: filled(palette::TOOL),
            plunge: filled(palette::PLUNGE),
            plunge_centre: filled(palette::BACKGROUND),
            tab: Look {
                stroke: Some(palette::TAB),
                stroke_width: Some(5.0 * u),
                linecap: Some("butt"),
                fill: Some("none"),
                ..Look::default()
            },
            tab_marker: Look {
                stroke: Some(palette::PART),
                stroke_width: Some(0.8 * u),
                fill: Some(palette::TAB),
                ..Look::default()
            },
            work_zero: line(palette::ORIGIN, 1.5 * u),
            leader: Look {
                stroke: Some(palette::TEXT),
                stroke_width: Some(0.5 * u),
                stroke_opacity: Some(0.7),
                fill: Some("none"),
                ..Look::default()
            },
            cut_order: Look {
                fill: Some(palette::PLUNGE),
                font_weight: Some("bold"),
                ..Look::default()
            },
            ellipse_label: filled(palette::ELLIPSE),
            hole_label: filled(palette::PART),
            casing,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use svg::node::element::Path;

    #[test]
    fn a_look_writes_its_attributes_and_nothing_else() {
        let looks = Looks::new(0.5, 6.0);
        let text = looks.rapid.apply(Path::new()).to_string();
        assert!(text.contains("stroke=\"#0b7f8a\""), "{text}");
        assert!(text.contains("stroke-dasharray=\"2 1.25\""), "{text}");
        assert!(text.contains("marker-mid=\"url(#rapid-head)\""), "{text}");
        assert!(!text.contains("opacity"), "{text}");
        assert!(!looks.casing);
        // A 0.2 mm kerf sits on the ellipse: casing under a thin path.
        let kerf = Looks::new(0.5, 0.2);
        assert!(kerf.casing);
        assert!(kerf.ellipse.stroke_width > Some(3.0 * kerf.path.stroke_width.unwrap()));
        assert_ne!(looks.rapid, looks.bay);
    }
}
