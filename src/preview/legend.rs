//! The legend: one entry for each kind of element the picture actually holds, each with a sample
//! drawn with the very [`Look`](super::look::Look) the picture uses. Every sample carries the
//! class `legend-sample` and, in `data-sample`, the classes of the drawn elements it stands for.

use super::frame::{Frame, num};
use super::line;
use super::look::{Looks, Words, palette};
use super::shapes::arrow_d;
use crate::geom::{Point, Vec2};
use svg::Node;
use svg::node::element::{Circle, ClipPath, Group, Path, Rectangle, Text};

/// What the picture holds, recorded as it is drawn.
#[derive(Debug, Clone, Copy, Default)]
pub struct Present {
    pub outline: bool,
    pub hole: bool,
    pub bay: bool,
    pub ellipse: bool,
    pub band: bool,
    pub path: bool,
    pub direction: bool,
    pub clearing: bool,
    pub lead_in: bool,
    pub overcut: bool,
    pub lead_out: bool,
    pub rapid: bool,
    pub plunge: bool,
    pub tab: bool,
    pub tab_marker: bool,
    pub work_zero: bool,
    pub cut_order: bool,
}

/// A legend entry: its words and how to draw its sample with its left end at the SVG point
/// `(x, y)`, `w` long.
struct Entry<'a> {
    text: String,
    sample: Box<dyn Fn(f64, f64, f64) -> Group + 'a>,
}

/// `el` marked as the legend's sample of the elements of `classes`.
fn tagged<T: Node>(mut el: T, classes: &str) -> T {
    el.assign("class", "legend-sample");
    el.assign("data-sample", classes);
    el
}

/// The entries for what is present, in a fixed order.
fn entries<'a>(
    looks: &'a Looks,
    words: &'a Words,
    p: &'a Present,
    u: f64,
    f: f64,
) -> Vec<Entry<'a>> {
    let mut out: Vec<Entry> = Vec::new();
    let straight = |classes: &'a str,
                    look: &'a super::look::Look|
     -> Box<dyn Fn(f64, f64, f64) -> Group + 'a> {
        Box::new(move |x, y, w| Group::new().add(tagged(look.apply(line(x, y, x + w, y)), classes)))
    };
    if p.outline || p.hole {
        let (text, classes) = match (p.outline, p.hole) {
            (true, true) => ("part outline and holes", "outline hole"),
            (true, false) => ("part outline", "outline"),
            _ => ("holes", "hole"),
        };
        out.push(Entry {
            text: text.into(),
            sample: straight(classes, &looks.outline),
        });
    }
    if p.bay {
        out.push(Entry {
            text: "bay (construction, not cut)".into(),
            sample: straight("bay", &looks.bay),
        });
    }
    if p.ellipse {
        out.push(Entry {
            text: if looks.casing && p.path {
                "solved ellipse (wide, under the path)".into()
            } else {
                "solved ellipse".into()
            },
            sample: straight("ellipse", &looks.ellipse),
        });
    }
    if p.path {
        let direction = p.direction;
        out.push(Entry {
            text: if direction {
                format!("{} and its direction", words.path)
            } else {
                words.path.to_string()
            },
            sample: Box::new(move |x, y, w| {
                let mut g =
                    Group::new().add(tagged(looks.path.apply(line(x, y, x + w, y)), "tool-path"));
                if direction {
                    let arrow = arrow_d(Point::new(x + 0.5 * w, -y), Vec2::new(1.0, 0.0), 9.0 * u);
                    g = g.add(tagged(
                        looks.direction.apply(Path::new().set("d", arrow)),
                        "direction",
                    ));
                }
                g
            }),
        });
    }
    if p.band {
        out.push(Entry {
            text: words.band.into(),
            sample: Box::new(move |x, y, w| {
                let mut s = tagged(looks.band.apply(line(x, y, x + w, y)), "tool-band");
                let mut g = Group::new();
                // A band wider than a row is cut to the row's height, its look unchanged.
                if looks.band.stroke_width.unwrap_or(0.0) > 1.4 * f {
                    let id = "legend-band-clip";
                    g = g.add(
                        ClipPath::new().set("id", id).add(
                            Rectangle::new()
                                .set("x", num(x - w))
                                .set("y", num(y - 0.7 * f))
                                .set("width", num(3.0 * w))
                                .set("height", num(1.4 * f)),
                        ),
                    );
                    s = s.set("clip-path", format!("url(#{id})"));
                }
                g.add(s)
            }),
        });
    }
    if p.rapid {
        out.push(Entry {
            text: "rapid move (not cutting)".into(),
            sample: Box::new(move |x, y, w| {
                let d = format!(
                    "M {} {} L {} {} L {} {}",
                    num(x),
                    num(y),
                    num(x + 0.5 * w),
                    num(y),
                    num(x + w),
                    num(y)
                );
                Group::new().add(tagged(looks.rapid.apply(Path::new().set("d", d)), "rapid"))
            }),
        });
    }
    let leads: Vec<&str> = [
        (p.lead_in, "lead-in"),
        (p.overcut, "overcut"),
        (p.lead_out, "lead-out"),
    ]
    .into_iter()
    .filter_map(|(on, name)| on.then_some(name))
    .collect();
    if !leads.is_empty() {
        let classes = leads.join(" ");
        out.push(Entry {
            text: leads.join(", "),
            sample: Box::new(move |x, y, w| {
                Group::new().add(tagged(looks.lead.apply(line(x, y, x + w, y)), &classes))
            }),
        });
    }
    if p.clearing {
        out.push(Entry {
            text: "pocket clearing".into(),
            sample: straight("clearing", &looks.clearing),
        });
    }
    if p.tab || p.tab_marker {
        let (span, marker) = (p.tab, p.tab_marker);
        out.push(Entry {
            text: "tab (left uncut)".into(),
            sample: Box::new(move |x, y, w| {
                let mut g = Group::new();
                if span {
                    g = g.add(tagged(looks.tab.apply(line(x, y, x + w, y)), "tab"));
                }
                if marker {
                    let c = Point::new(x + 0.5 * w, -y);
                    let d = super::diamond_d(c, Vec2::new(1.0, 0.0), 5.0 * u);
                    g = g.add(tagged(
                        looks.tab_marker.apply(Path::new().set("d", d)),
                        "tab-marker",
                    ));
                }
                g
            }),
        });
    }
    if p.plunge {
        out.push(Entry {
            text: words.entry.into(),
            sample: Box::new(move |x, y, w| {
                let (cx, r) = (x + 0.5 * w, 4.0 * u);
                let disc = |look: &super::look::Look, r: f64| {
                    look.apply(
                        Circle::new()
                            .set("cx", num(cx))
                            .set("cy", num(y))
                            .set("r", num(r)),
                    )
                };
                Group::new()
                    .add(tagged(disc(&looks.plunge, r), "plunge"))
                    .add(tagged(disc(&looks.plunge_centre, 0.4 * r), "plunge-centre"))
            }),
        });
    }
    if p.cut_order {
        out.push(Entry {
            text: "cut order (1 is cut first)".into(),
            sample: Box::new(move |x, y, w| {
                Group::new().add(tagged(
                    looks.cut_order.apply(
                        Text::new("1")
                            .set("x", num(x + 0.5 * w))
                            .set("y", num(y))
                            .set("font-size", num(0.8 * f))
                            .set("text-anchor", "middle")
                            .set("dominant-baseline", "middle"),
                    ),
                    "cut-order",
                ))
            }),
        });
    }
    if p.work_zero {
        out.push(Entry {
            text: "work zero X0 Y0".into(),
            sample: Box::new(move |x, y, _| {
                // The same mark as in the picture, smaller, its corner low in the sample's box.
                Group::new().add(tagged(
                    looks
                        .work_zero
                        .apply(super::axes_mark(x + 0.6 * f, y + 0.4 * f, 0.9 * f, u)),
                    "work-zero",
                ))
            }),
        });
    }
    out
}

/// How many rows the legend takes (two entries a row).
pub fn rows(looks: &Looks, words: &Words, present: &Present, u: f64, f: f64) -> usize {
    entries(looks, words, present, u, f).len().div_ceil(2)
}

/// The legend under the drawing, from `frame.legend_top` down.
pub fn legend(frame: &Frame, looks: &Looks, words: &Words, present: &Present) -> Group {
    let u = frame.unit();
    let f = frame.font;
    let top = frame.legend_top + 2.5 * f;
    let column = 0.5 * frame.view_w;
    let mut g = Group::new().set("class", "legend");
    for (i, entry) in entries(looks, words, present, u, f).into_iter().enumerate() {
        let x = frame.view_x + f + (i % 2) as f64 * column;
        let y = top + (i / 2) as f64 * 1.6 * f;
        g = g.add((entry.sample)(x, y, 3.0 * f)).add(
            Text::new(entry.text)
                .set("x", num(x + 3.6 * f))
                .set("y", num(y))
                .set("font-size", num(0.8 * f))
                .set("dominant-baseline", "middle")
                .set("fill", palette::TEXT),
        );
    }
    g
}
