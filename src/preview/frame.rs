//! The preview's page: where the drawing sits in SVG user space, and the sizes that scale with it.
//!
//! # Units and the y flip
//!
//! One SVG user unit is one millimetre. The drawing's y axis points up and SVG's points down, so a
//! drawing point `(x, y)` is drawn at `(x, −y)`: the page's top edge is at drawing y = 0 flipped,
//! and the `viewBox` simply covers the flipped bounds. Reading a point back from the SVG is
//! `(x_svg, −y_svg)`.

use crate::geom::Point;

/// Axis-aligned bounds in drawing millimetres (y up).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bounds {
    pub min: Point,
    pub max: Point,
}

impl Bounds {
    /// Bounds of the finite points; `None` when there are none.
    pub fn of(points: impl IntoIterator<Item = Point>) -> Option<Bounds> {
        let mut b: Option<Bounds> = None;
        for p in points.into_iter().filter(|p| p.is_finite()) {
            b = Some(match b {
                None => Bounds { min: p, max: p },
                Some(b) => Bounds {
                    min: Point::new(b.min.x.min(p.x), b.min.y.min(p.y)),
                    max: Point::new(b.max.x.max(p.x), b.max.y.max(p.y)),
                },
            });
        }
        b
    }

    pub fn width(&self) -> f64 {
        self.max.x - self.min.x
    }

    pub fn height(&self) -> f64 {
        self.max.y - self.min.y
    }
}

/// The page layout: the `viewBox` and the sizes derived from the drawing's size.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Frame {
    /// `viewBox` in SVG user units (mm): left, top, width, height.
    pub view_x: f64,
    pub view_y: f64,
    pub view_w: f64,
    pub view_h: f64,
    /// Body text size (mm). Everything else scales with it.
    pub font: f64,
    /// Top of the band under the drawing that holds the scale bar and legend (SVG y).
    pub legend_top: f64,
    /// The content bounds (drawing mm).
    pub content: Bounds,
    /// The free space kept around the content (mm); labels may sit in it.
    pub margin: f64,
}

impl Frame {
    /// A page around `content` with room above for the title (three lines) and below for the
    /// scale bar and a legend of `legend_rows` rows.
    ///
    /// Text is 2.5 % of the drawing's larger side, kept between 1.5 mm and 12 mm so that it stays
    /// readable at 1:1 for small parts and does not swamp large ones.
    pub fn around(content: Bounds, legend_rows: usize) -> Frame {
        let size = content.width().max(content.height()).max(1.0);
        let font = if size.is_finite() {
            (0.025 * size).clamp(1.5, 12.0)
        } else {
            12.0
        };
        let margin = (0.05 * size).max(2.0 * font);
        let title_band = 4.4 * font;
        let legend_band = (2.5 + 1.6 * legend_rows as f64) * font + margin;
        // The legend needs about 2 × 18 font widths; the title about 40.
        let min_width = 40.0 * font;
        let mut view_w = content.width() + 2.0 * margin;
        let mut view_x = content.min.x - margin;
        if view_w < min_width {
            view_x -= 0.5 * (min_width - view_w);
            view_w = min_width;
        }
        let view_y = -(content.max.y + margin) - title_band;
        let legend_top = -content.min.y + margin;
        let view_h = legend_top + legend_band - view_y;
        Frame {
            view_x,
            view_y,
            view_w,
            view_h,
            font,
            legend_top,
            content,
            margin,
        }
    }

    /// The area labels may use (drawing mm): the content and its margin.
    pub fn drawing_area(&self) -> Bounds {
        Bounds {
            min: Point::new(
                self.content.min.x - self.margin,
                self.content.min.y - self.margin,
            ),
            max: Point::new(
                self.content.max.x + self.margin,
                self.content.max.y + self.margin,
            ),
        }
    }

    /// A drawing point in SVG user space.
    pub fn svg_xy(&self, p: Point) -> (f64, f64) {
        (p.x, -p.y)
    }

    /// Stroke width unit: a tenth of the text size.
    pub fn unit(&self) -> f64 {
        0.1 * self.font
    }
}

/// A number for an SVG attribute: at most 4 decimals, trailing zeros dropped, never `-0`,
/// never an exponent. Non-finite values (which callers filter out) become `0`.
pub fn num(v: f64) -> String {
    if !v.is_finite() {
        return "0".into();
    }
    let s = crate::geom::decimal::fixed(v, 4);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    match s {
        "-0" | "" => "0".into(),
        _ => s.to_string(),
    }
}

/// A length of about a fifth of `width` rounded to 1, 2 or 5 times a power of ten (mm).
pub fn scale_bar_length(width: f64) -> f64 {
    let target = (width / 5.0).max(1e-3);
    let power = 10f64.powf(target.log10().floor());
    [5.0, 2.0, 1.0]
        .into_iter()
        .map(|m| m * power)
        .find(|&l| l <= target)
        .unwrap_or(power)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_short_and_clean() {
        assert_eq!(num(1.0), "1");
        assert_eq!(num(-0.00001), "0");
        assert_eq!(num(12.34567), "12.3457");
        assert_eq!(num(-2.5), "-2.5");
        assert_eq!(num(1e-9), "0");
        assert_eq!(num(f64::NAN), "0");
    }

    #[test]
    fn scale_bar_is_a_round_number() {
        assert_eq!(scale_bar_length(200.0), 20.0);
        assert_eq!(scale_bar_length(260.0), 50.0);
        assert_eq!(scale_bar_length(12.0), 2.0);
        assert_eq!(scale_bar_length(7.0), 1.0);
    }

    #[test]
    fn frame_covers_the_content_with_room_for_title_and_legend() {
        let content = Bounds {
            min: Point::new(-10.0, 5.0),
            max: Point::new(190.0, 105.0),
        };
        let rows = 6;
        let f = Frame::around(content, rows);
        let (x0, y0) = f.svg_xy(Point::new(-10.0, 105.0));
        let (x1, y1) = f.svg_xy(Point::new(190.0, 5.0));
        assert!(f.view_x < x0 && x1 < f.view_x + f.view_w);
        assert!(f.view_y + 4.0 * f.font < y0 && y1 < f.legend_top);
        assert!(f.legend_top + (2.5 + 1.6 * rows as f64) * f.font < f.view_y + f.view_h);
        assert!((f.font - 5.0).abs() < 1e-12);
        // Fewer legend rows, a shorter page; the drawing stays where it is.
        let g = Frame::around(content, 2);
        assert!(g.view_h < f.view_h && g.legend_top == f.legend_top && g.view_y == f.view_y);
        // The drawing area holds the content and its margin, below the title and above the
        // legend.
        let area = f.drawing_area();
        assert!(area.min.x < -10.0 && area.max.y > 105.0);
        assert!(-area.max.y > f.view_y + 4.0 * f.font && -area.min.y <= f.legend_top);
    }
}
