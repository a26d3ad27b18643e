//! `conicut check`: a whole program held to the text rules ([`super::reader`]), the machine's
//! limits, and the cuts its drawing calls for ([`super::against`]).
//!
//! Machine checks, from the profile (every length in mm, feeds in mm/min):
//!
//! * every point the tool centre reaches (arcs by their extremes) inside the travel envelope;
//! * every feed at most the profile's largest feed, every spindle speed at most its largest;
//! * a rapid that moves in XY below the top of the stock (Z < 0), or with the beam, torch or jet
//!   on, is a rapid while cutting; one below the safe height that passes over the finished part
//!   (sampled every [`RAPID_SPACING`] mm; over a hole or pocket is not over the part) is a
//!   warning;
//! * on laser, plasma and waterjet, every time the process comes on it dwells (G4) at least the
//!   profile's pierce time before the first move in XY.

use super::against::{Against, AgainstRules, FeatureCheck, Material, check_against};
use super::reader::{Dialect, ProgramFinding, Reading, Severity, read_program};
use super::time::{CycleTime, DEFAULT_JUNCTION_DEVIATION, TimeLimits, cycle_time_with_stops};
use super::{Trace, TraceMove, bounds_of};
use crate::geom::Bounds;
use crate::plan::PlannedCut;
use serde::Serialize;

/// The machine as the checker holds the program to it (mm, mm/min, seconds).
#[derive(Debug, Clone, PartialEq)]
pub struct MachineRules {
    /// The profile's name, for messages.
    pub profile: String,
    /// `[min, max]` per axis X, Y, Z.
    pub travel: [[f64; 2]; 3],
    pub max_feed: f64,
    /// Mills and routers: the largest spindle speed (rpm).
    pub max_spindle_speed: Option<f64>,
    pub safe_height: f64,
    /// Laser, plasma, waterjet: the pierce dwell (s); `None` on mills and routers.
    pub pierce_dwell: Option<f64>,
    /// How the program's text is read.
    pub dialect: Dialect,
    /// For the cycle time: the axes' acceleration (mm/s²) and the rapid rate (mm/min).
    pub acceleration: f64,
    pub rapid_feed: f64,
}

/// Everything `conicut check` found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProgramCheck {
    pub features: Vec<FeatureCheck>,
    /// Must-fix findings first, then warnings, each in line order.
    pub findings: Vec<ProgramFinding>,
    pub moves: usize,
    pub program_lines: usize,
    /// Smallest and largest X, Y, Z reached (mm).
    pub bounds_mm: Option<([f64; 3], [f64; 3])>,
    /// How long the program runs ([`super::time`]).
    pub cycle_time: CycleTime,
    /// How many times the spindle or the process comes on.
    pub starts: usize,
    /// The picture of the program and its findings ([`super::picture`]), when asked for.
    #[serde(skip)]
    pub picture: Option<String>,
    /// The interactive page ([`super::view`]), when asked for.
    #[serde(skip)]
    pub view: Option<String>,
}

/// The pictures `check_program` makes besides its findings.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Pictures {
    /// The SVG of the program and its findings (`--svg`).
    pub svg: bool,
    /// The interactive HTML page, headed by this title (`--html`).
    pub html: Option<String>,
}

impl ProgramCheck {
    /// Whether anything must be fixed.
    pub fn must_fix(&self) -> usize {
        self.findings
            .iter()
            .filter(|f| f.severity == Severity::MustFix)
            .count()
    }

    /// One line per feature, then the findings by severity with their lines.
    pub fn to_text(&self, program: &str) -> String {
        let mut s = format!("program {program}: {} moves\n\nfeatures:\n", self.moves);
        for f in &self.features {
            let lines = f
                .lines
                .map_or("not cut".to_string(), |(a, b)| format!("lines {a}–{b}"));
            let dev = f
                .deviation_mm
                .map_or(String::new(), |d| format!(", deviation {d:.4} mm"));
            let part = f
                .part_side_mm
                .map_or(String::new(), |d| format!(", onto the part {d:.4} mm"));
            let uncut = if f.uncut.is_empty() {
                String::new()
            } else {
                format!(", {} stretch(es) uncut", f.uncut.len())
            };
            let tabs = if f.tabs > 0 {
                format!(", {} tab(s)", f.tabs)
            } else {
                String::new()
            };
            s.push_str(&format!(
                "  {}: {lines}, {} moves{dev}{part}{uncut}{tabs}\n",
                f.name, f.moves
            ));
        }
        for severity in [Severity::MustFix, Severity::Warning] {
            let of: Vec<&ProgramFinding> = self
                .findings
                .iter()
                .filter(|f| f.severity == severity)
                .collect();
            if of.is_empty() {
                continue;
            }
            s.push_str(&format!("\n{} ({}):\n", severity.word(), of.len()));
            for f in of {
                let at = if f.line > 0 {
                    format!("line {}", f.line)
                } else {
                    "program".to_string()
                };
                s.push_str(&format!("  {at} [{}]: {}\n", f.rule, f.message));
            }
        }
        let t = &self.cycle_time;
        s.push_str(&format!(
            "\ncycle time: {} (cutting {}, rapids {}, dwells {}); {:.1} mm cut, {:.1} mm of \
             rapids, {} start(s) of the spindle or process\n",
            minutes(t.total_s),
            minutes(t.cutting_s),
            minutes(t.rapid_s),
            minutes(t.dwell_s),
            t.cut_length_mm,
            t.rapid_length_mm,
            self.starts
        ));
        if self.findings.is_empty() {
            s.push_str("\nno findings: every rule checked holds\n");
        }
        s
    }

    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
    }
}

/// A number for a message: three decimals, or in exponent form past a billion (a program's
/// absurd values stay readable).
pub fn shown(v: f64) -> String {
    if v.abs() >= 1e9 {
        format!("{v:.3e}")
    } else {
        format!("{v:.3}")
    }
}

/// Seconds as `2 h 05 min 12 s`, `3 min 12.4 s` or `12.4 s`.
pub fn minutes(seconds: f64) -> String {
    if !seconds.is_finite() || seconds >= 1e9 {
        return format!("{} s", shown(seconds));
    }
    if seconds >= 3600.0 {
        let whole = seconds.round() as u64;
        format!(
            "{} h {:02} min {:02} s",
            whole / 3600,
            whole % 3600 / 60,
            whole % 60
        )
    } else if seconds >= 60.0 {
        format!("{} min {:.1} s", (seconds / 60.0).floor(), seconds % 60.0)
    } else {
        format!("{seconds:.1} s")
    }
}

/// Checks `program` (see the module docs) against `cuts`, and makes the `pictures` asked for.
pub fn check_program(
    program: &str,
    machine: &MachineRules,
    cuts: &[PlannedCut],
    rules: &AgainstRules,
    pictures: &Pictures,
) -> ProgramCheck {
    // The box the part occupies (mm), for the rapids' rule.
    let part = cuts
        .iter()
        .filter_map(|c| c.edge().bounding_box())
        .reduce(|a, b| a.union(b));
    let Reading { trace, findings } = read_program(program, &machine.dialect);
    let mut findings = findings;
    travel(&trace, machine, &mut findings);
    limits(&trace, machine, &mut findings);
    rapids(
        &trace,
        machine,
        part,
        cuts,
        rules.tool_radius,
        &mut findings,
    );
    if let Some(dwell) = machine.pierce_dwell {
        pierce_dwells(&trace, dwell, &mut findings);
    }
    if trace.end_line.is_none() {
        findings.push(ProgramFinding::must_fix(
            program.lines().count(),
            "program-end",
            "the program has no end (M2 or M30): it may have been cut short, and the spindle or \
             process would be left as it is; write the program again or end it"
                .into(),
        ));
    }
    let Against {
        features,
        findings: measured,
    } = check_against(&trace, cuts, rules);
    findings.extend(measured);
    findings.sort_by_key(|f| (f.severity, f.line));
    let stops: Vec<(usize, f64)> = trace
        .dwells
        .iter()
        .map(|d| (d.before_move, d.seconds))
        .collect();
    let time_limits = time_limits(machine);
    let cycle_time = cycle_time_with_stops(&trace.moves, &stops, &time_limits);
    let picture = pictures
        .svg
        .then(|| super::picture::findings_svg(&trace, cuts, &findings));
    let view = pictures.html.as_ref().map(|title| {
        super::view::program_html(title, program, &trace, cuts, &findings, &time_limits)
    });
    ProgramCheck {
        features,
        findings,
        moves: trace.moves.len(),
        program_lines: program.lines().count(),
        bounds_mm: trace.bounds,
        cycle_time,
        starts: trace.switches.iter().filter(|s| s.on).count(),
        picture,
        view,
    }
}

/// The interactive page ([`super::view`]) of `program` with the `findings` a check of it made
/// (`plan --html`: the program as finally written, its findings from the check run before the
/// header took the cycle time, which moves no line).
pub fn view_page(
    title: &str,
    program: &str,
    machine: &MachineRules,
    cuts: &[PlannedCut],
    findings: &[ProgramFinding],
) -> String {
    let Reading { trace, .. } = read_program(program, &machine.dialect);
    super::view::program_html(
        title,
        program,
        &trace,
        cuts,
        findings,
        &time_limits(machine),
    )
}

/// What limits the machine's motion for the cycle time.
fn time_limits(machine: &MachineRules) -> TimeLimits {
    TimeLimits {
        acceleration: machine.acceleration,
        rapid_feed: machine.rapid_feed,
        junction_deviation: DEFAULT_JUNCTION_DEVIATION,
    }
}

/// The first move past each side of the envelope.
fn travel(trace: &Trace, machine: &MachineRules, out: &mut Vec<ProgramFinding>) {
    let axes = ['X', 'Y', 'Z'];
    let mut told = [[false; 2]; 3];
    for m in &trace.moves {
        let Some((lo, hi)) = bounds_of(std::slice::from_ref(m)) else {
            continue;
        };
        for k in 0..3 {
            let [min, max] = machine.travel[k];
            for (side, past, value, limit) in [
                (0, lo[k] < min - 1e-9, lo[k], min),
                (1, hi[k] > max + 1e-9, hi[k], max),
            ] {
                if past && !told[k][side] {
                    told[k][side] = true;
                    out.push(ProgramFinding::must_fix(
                        m.line,
                        "travel",
                        format!(
                            "the tool reaches {}{} mm, past the {} travel limit {limit} mm \
                             of profile \"{}\" (later moves past it are not listed)",
                            axes[k],
                            shown(value),
                            if side == 0 { "lower" } else { "upper" },
                            machine.profile
                        ),
                    ));
                }
            }
        }
    }
}

/// Feeds above the profile's largest (the first of each run of lines), spindle speeds above its
/// largest.
fn limits(trace: &Trace, machine: &MachineRules, out: &mut Vec<ProgramFinding>) {
    let mut last_told = f64::NAN;
    for m in trace.moves.iter().filter(|m| !m.rapid) {
        if m.feed > machine.max_feed * (1.0 + 1e-9) && m.feed != last_told {
            last_told = m.feed;
            out.push(ProgramFinding::must_fix(
                m.line,
                "feed-limit",
                format!(
                    "the feed {} mm/min is above the largest {} mm/min of profile \"{}\"",
                    shown(m.feed),
                    machine.max_feed,
                    machine.profile
                ),
            ));
        }
    }
    match machine.max_spindle_speed {
        Some(max) => {
            for &(line, speed) in &trace.speeds {
                if speed > max {
                    out.push(ProgramFinding::must_fix(
                        line,
                        "spindle-limit",
                        format!(
                            "the spindle speed S{speed} is above the largest {max} rpm of \
                             profile \"{}\"",
                            machine.profile
                        ),
                    ));
                }
            }
        }
        None => {
            for &(line, speed) in trace.speeds.iter().filter(|s| s.1 > 0.0) {
                out.push(ProgramFinding::warning(
                    line,
                    "spindle-limit",
                    format!(
                        "a spindle speed S{speed} on a machine with no spindle (profile \"{}\")",
                        machine.profile
                    ),
                ));
            }
        }
    }
}

fn moves_xy(m: &TraceMove) -> bool {
    m.from[0] != m.to[0] || m.from[1] != m.to[1]
}

/// Rapids while cutting, and rapids below the safe height over the part.
fn rapids(
    trace: &Trace,
    machine: &MachineRules,
    part: Option<Bounds>,
    cuts: &[PlannedCut],
    tool_radius: f64,
    out: &mut Vec<ProgramFinding>,
) {
    let thermal = machine.pierce_dwell.is_some();
    let material = Material::new(cuts, tool_radius);
    let mut near = Vec::new();
    // Whether a rapid passes over the finished part: its XY path sampled every
    // RAPID_SPACING mm.
    let mut over_part = |m: &TraceMove| {
        if !over(part, m) {
            return false;
        }
        let (a, b) = (
            crate::geom::Point::new(m.from[0], m.from[1]),
            crate::geom::Point::new(m.to[0], m.to[1]),
        );
        let n = ((a.distance(b) / RAPID_SPACING).ceil() as usize).clamp(1, 100_000);
        (0..=n).any(|k| material.contains(a.lerp(b, k as f64 / n as f64), &mut near))
    };
    for m in trace.moves.iter().filter(|m| m.rapid && moves_xy(m)) {
        let low = m.from[2].min(m.to[2]);
        if low < 0.0 && !thermal {
            out.push(ProgramFinding::must_fix(
                m.line,
                "rapid-cutting",
                format!(
                    "a rapid (G0) in XY at Z{low:.3} mm, below the top of the stock: it would \
                     drive the tool through the material at rapid speed"
                ),
            ));
        } else if thermal && m.on {
            out.push(ProgramFinding::must_fix(
                m.line,
                "rapid-cutting",
                "a rapid (G0) in XY with the beam, torch or jet on".into(),
            ));
        } else if low < machine.safe_height - HEIGHT_ROUNDING && over_part(m) {
            out.push(ProgramFinding::warning(
                m.line,
                "rapid-height",
                format!(
                    "a rapid over the part at Z{low:.3} mm, below the safe height {} mm: clamps \
                     or tipped parts may be in the way",
                    machine.safe_height
                ),
            ));
        }
    }
}

/// How far below the safe height a rapid may be by the rounding of its written Z alone (mm): a
/// height written to 3 decimals of a millimetre or 4 of an inch (0.00005 in = 0.00127 mm).
pub const HEIGHT_ROUNDING: f64 = 0.002;

/// The spacing of the points at which a low rapid is tested for passing over the part (mm).
pub const RAPID_SPACING: f64 = 0.5;

/// Whether the move's box meets the part's box.
fn over(part: Option<Bounds>, m: &TraceMove) -> bool {
    let Some(b) = part else {
        return true;
    };
    let (x0, x1) = (m.from[0].min(m.to[0]), m.from[0].max(m.to[0]));
    let (y0, y1) = (m.from[1].min(m.to[1]), m.from[1].max(m.to[1]));
    x1 >= b.min.x && x0 <= b.max.x && y1 >= b.min.y && y0 <= b.max.y
}

/// Each time the process comes on, a dwell of at least `dwell` seconds after it (on its line or
/// later) and before the first XY feed move. One pass over the switches, dwells and moves
/// together.
fn pierce_dwells(trace: &Trace, dwell: f64, out: &mut Vec<ProgramFinding>) {
    let mut next_dwell = 0;
    let mut next_move = 0;
    for s in trace.switches.iter().filter(|s| s.on) {
        next_move = next_move.max(s.before_move);
        while next_move < trace.moves.len()
            && (trace.moves[next_move].rapid || !moves_xy(&trace.moves[next_move]))
        {
            next_move += 1;
        }
        let Some(first) = trace.moves.get(next_move) else {
            break;
        };
        let until = first.line;
        while next_dwell < trace.dwells.len() && trace.dwells[next_dwell].line < s.line {
            next_dwell += 1;
        }
        let mut waited = 0.0;
        let mut k = next_dwell;
        while k < trace.dwells.len() && trace.dwells[k].line < until {
            waited += trace.dwells[k].seconds;
            k += 1;
        }
        if waited + 1e-9 < dwell {
            out.push(ProgramFinding::must_fix(
                s.line,
                "pierce-dwell",
                format!(
                    "the process comes on here and the cut moves off on line {until} after a \
                     dwell of {waited:.2} s, less than the profile's pierce time {dwell} s"
                ),
            ));
        }
    }
}
