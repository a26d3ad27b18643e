//! The `conicut` command: reads files, runs the job, writes the outputs whole or not at all.

mod cli;

use anyhow::{Context, Result, bail};
use clap::{Args, Parser, Subcommand};
use cli::batch;
use cli::outputs::{self, OutputBody};
use cli::progress::Progress;
use conicut::chain::{DEFAULT_BAY_LAYER, DEFAULT_MAX_GAP};
use conicut::check::program::Pictures;
use conicut::geom::Point;
use conicut::pipeline::{JobOutput, Step, check_job, resolve, run_resolved_viewed, solve_job};
use conicut::plan::{Direction, LeadKind, WorkZero};
use conicut::post::WorkOffset;
use conicut::read::Units;
use conicut::read::parse_points_csv;
use conicut::report::OutputFile;
use conicut::settings::defaults;
use conicut::settings::job_file::{FeatureSource, FitPoints, JobFile, parse_job_file};
use conicut::settings::words::Length;
use conicut::settings::{BUNDLED_PROFILES, JobSettings, LeadRequest, Machine, TabRequest};
use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};

/// Solve elliptical openings from a DXF drawing and write a CNC program, an SVG preview and a
/// report.
#[derive(Parser, Debug)]
#[command(name = "conicut", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Run the whole job on the bundled demo part (a truss bracket with four-sided bays) for one
    /// of the bundled machine profiles.
    Demo {
        /// Folder for the outputs (created if missing).
        #[arg(long, default_value = "conicut-demo")]
        out: PathBuf,
        /// Which bundled profile: metric-mill (a 6 mm end mill, the default), inch-router,
        /// laser, plasma or waterjet (cut with the profile's kerf).
        #[arg(long, default_value = "metric-mill")]
        machine: String,
        #[command(flatten)]
        cut: CutArgs,
        /// Edge margin: each bay side is moved inward by this much before solving (mm, or with a unit: 0.25in).
        #[arg(long, default_value_t = Length(4.0), allow_negative_numbers = true)]
        margin: Length,
        /// Cutter diameter (mm, or with a unit: 0.25in). Default: 6 mm for mills and routers, the profile's kerf width
        /// for laser, plasma and waterjet.
        #[arg(long, visible_alias = "kerf", allow_negative_numbers = true)]
        tool_diameter: Option<Length>,
        /// A job file saying which ellipse each bay gets (see demo-parts/truss-bracket-job.toml).
        #[arg(long)]
        job: Option<PathBuf>,
        /// Also write `<name>.html`: one self-contained page (no network needed) to look
        /// through the program: zoom and pan, a slider and play button that draw it move by
        /// move, the line of the move under the cursor, the move of a clicked line, a switch per
        /// feature, the check's findings and the time estimate along the way.
        #[arg(long)]
        html: bool,
        /// Replace files under the output names that an earlier conicut run did not write
        /// (files its report in the folder lists are replaced anyway, and the new report says
        /// which were).
        #[arg(long)]
        force: bool,
    },
    /// Solve every feature of a drawing and list every candidate, without cutting anything.
    Solve {
        /// The DXF drawing.
        drawing: PathBuf,
        #[command(flatten)]
        input: DrawingArgs,
        /// Print JSON for scripts instead of the table.
        #[arg(long)]
        json: bool,
    },
    /// Run the whole job on drawings of your own: one, several, or folders of them.
    Plan {
        /// The DXF drawings, or folders of them (every .dxf directly inside, in name order).
        #[arg(required = true)]
        drawings: Vec<PathBuf>,
        /// Machine profile: the path of a profile file (TOML), e.g.
        /// machine-profiles/metric-mill.toml, or the name of a bundled one: metric-mill,
        /// inch-router, laser, plasma or waterjet.
        #[arg(long)]
        machine: PathBuf,
        /// Cutter diameter (mm, or with a unit: 0.25in), or the kerf width for laser, plasma and waterjet (`--kerf`);
        /// those profiles supply their kerf when it is not given.
        #[arg(long, visible_alias = "kerf", allow_negative_numbers = true)]
        tool_diameter: Option<Length>,
        /// Folder for the outputs (created if missing). One drawing: its outputs, by default
        /// `<drawing name>-conicut` in the current folder. Several: one `<drawing
        /// name>-conicut` folder per drawing inside it, by default in the current folder.
        #[arg(long)]
        out: Option<PathBuf>,
        /// No progress bar (it is shown only on a terminal, and only for work that lasts).
        #[arg(long)]
        quiet: bool,
        /// Also write `<name>-solved.dxf`: a copy of the drawing (R2000 or later) with every
        /// solved ellipse as an ELLIPSE entity and its centre as a POINT on layer CONICUT-SOLVED.
        #[arg(long)]
        dxf_out: bool,
        /// Also write `<name>.html`: one self-contained page (no network needed) to look
        /// through the program: zoom and pan, a slider and play button that draw it move by
        /// move, the line of the move under the cursor, the move of a clicked line, a switch per
        /// feature, the check's findings and the time estimate along the way.
        #[arg(long)]
        html: bool,
        /// Replace files under the output names that an earlier conicut run did not write
        /// (files its report in the folder lists are replaced anyway, and the new report says
        /// which were).
        #[arg(long)]
        force: bool,
        #[command(flatten)]
        input: DrawingArgs,
        #[command(flatten)]
        cut: CutArgs,
    },
    /// Check a program against its drawing before it runs.
    ///
    /// Any RS274/NGC-style program (conicut's, or one from elsewhere) is read on its own and held
    /// to the text's rules, the machine's limits, and every cut measured against the exact
    /// curves solved again from the drawing and job (give the same options as to `plan`). Exit
    /// codes: 0 no finding that must be fixed (warnings may be listed), 1 findings that must be
    /// fixed, 2 the program, drawing, job or profile could not be read.
    Check {
        /// The program to check.
        program: PathBuf,
        /// The DXF drawing the program should cut.
        #[arg(long)]
        against: PathBuf,
        /// Machine profile: a profile file's path or a bundled profile's name (as for `plan`).
        #[arg(long)]
        machine: PathBuf,
        /// Cutter diameter (mm, or with a unit: 0.25in), or the kerf width (`--kerf`); the
        /// profile's kerf when not given on laser, plasma and waterjet.
        #[arg(long, visible_alias = "kerf", allow_negative_numbers = true)]
        tool_diameter: Option<Length>,
        /// Print JSON for scripts instead of the text.
        #[arg(long)]
        json: bool,
        /// Also draw the program read back over the finished edges, each finding marked where it
        /// occurs, into this SVG file.
        #[arg(long, value_name = "FILE")]
        svg: Option<PathBuf>,
        /// Also write one self-contained HTML page (no network needed) to look through the
        /// program: zoom and pan, a slider and play button that draw it move by move, the line
        /// of the move under the cursor, the move of a clicked line, a switch per feature, the
        /// findings and the time estimate along the way.
        #[arg(long, value_name = "FILE")]
        html: Option<PathBuf>,
        #[command(flatten)]
        input: DrawingArgs,
        #[command(flatten)]
        cut: CutArgs,
    },
}

/// How to read the drawing and which ellipses to solve: shared by `solve` and `plan`.
#[derive(Args, Debug)]
struct DrawingArgs {
    /// A job file (TOML) saying, per feature, which ellipse to make and how to cut it. Without
    /// one, every bay gets the largest ellipse touching all its sides.
    #[arg(long)]
    job: Option<PathBuf>,
    /// Units of a drawing that states none in its header ($INSUNITS): mm or in.
    #[arg(long)]
    units: Option<Units>,
    /// Layer holding the bays (matched ignoring case; a job file's bay_layer wins).
    #[arg(long, default_value = DEFAULT_BAY_LAYER)]
    bay_layer: String,
    /// Edge margin: each bay side is moved inward by this much before solving (mm or with a unit; a job file's
    /// margin wins).
    #[arg(long, default_value_t = Length(defaults::MARGIN_MM), allow_negative_numbers = true)]
    margin: Length,
    /// Cut only these layers' geometry (names separated by commas, matched ignoring case; the
    /// bay layer is read as always). Default: every layer the drawing shows; frozen, off and
    /// non-plotting layers are never cut unless named here. A job file's `cut_layers` applies
    /// when this is not given.
    #[arg(long, value_delimiter = ',', value_name = "LAYERS")]
    cut_layers: Option<Vec<String>>,
    /// Never cut these layers' geometry (names separated by commas, matched ignoring case). A
    /// job file's `skip_layers` applies when this is not given.
    #[arg(long, value_delimiter = ',', value_name = "LAYERS")]
    skip_layers: Option<Vec<String>>,
    /// Largest gap closed when joining drawing pieces into contours (mm, or with a unit: 0.25in).
    #[arg(
        long = "gap-tolerance",
        default_value_t = Length(DEFAULT_MAX_GAP),
        allow_negative_numbers = true
    )]
    max_gap: Length,
}

#[derive(Args, Debug)]
struct CutArgs {
    /// Largest distance between the emitted path and the exact curve (mm, or with a unit: 0.25in).
    #[arg(long, default_value_t = Length(defaults::TOLERANCE_MM), allow_negative_numbers = true)]
    tolerance: Length,
    /// Cut depth below the work zero (mm or with a unit, positive). Default: the machine profile's (the demo:
    /// through its 3 mm plate and 0.5 mm into the board below).
    #[arg(long, allow_negative_numbers = true)]
    depth: Option<Length>,
    /// Depth of each pass on a mill or router (mm, or with a unit: 0.25in): the cut is made in passes this deep, the
    /// last one to the full depth. Default: the full depth in one pass.
    #[arg(long, allow_negative_numbers = true)]
    stepdown: Option<Length>,
    /// How a mill or router enters the material: helix (a helix about the plunge point where
    /// there is room, the zig-zag elsewhere), zigzag (back and forth along the first entry
    /// move), or straight (plunge straight down: centre-cutting tools only). Default: helix.
    /// Mills and routers only.
    #[arg(long, value_enum)]
    entry: Option<EntryArg>,
    /// The steepest descent of a helix or zig-zag entry (degrees; common practice: 1–3° in
    /// steel, up to 5–10° in aluminium). Default: 3. Mills and routers only.
    #[arg(long, allow_negative_numbers = true)]
    ramp_angle: Option<f64>,
    /// The cutting feed (mm/min). Default: the job file's, else the machine profile's; refused
    /// above the profile's largest feed.
    #[arg(long, allow_negative_numbers = true, value_name = "MM_PER_MIN")]
    feed: Option<f64>,
    /// The feed down into the work (mm/min): the plunge on a mill or router, the move from
    /// pierce height to cut height on the others. Default: the job file's, else the profile's.
    #[arg(long, allow_negative_numbers = true, value_name = "MM_PER_MIN")]
    plunge_feed: Option<f64>,
    /// The spindle speed (rpm), mills and routers only. Default: the job file's, else the
    /// profile's; refused above the profile's largest speed.
    #[arg(long, allow_negative_numbers = true, value_name = "RPM")]
    spindle_speed: Option<f64>,
    /// Climb (default) or conventional milling; thermal cuts keep the usual direction.
    #[arg(long, default_value = "climb")]
    direction: Direction,
    /// Mills and routers: leave this much stock (mm or with a unit, radial) for a finishing pass at full depth.
    #[arg(long, allow_negative_numbers = true)]
    finish_allowance: Option<Length>,
    /// Pockets: distance between clearing rings (mm, or with a unit: 0.25in). Default: 40 % of the tool diameter.
    #[arg(long, allow_negative_numbers = true)]
    stepover: Option<Length>,
    /// The lead-in's shape: straight (a straight move from the plunge or pierce point), line,
    /// arc, or line-arc. Default: the job file's, else the profile's.
    #[arg(long)]
    lead: Option<LeadKind>,
    /// Length of the lead's straight part (mm, or with a unit: 0.25in). Default: the job file's, else the profile's.
    #[arg(long, allow_negative_numbers = true)]
    lead_length: Option<Length>,
    /// Radius of the lead's arc (mm, or with a unit: 0.25in). Default: the job file's, else the profile's.
    #[arg(long, allow_negative_numbers = true)]
    lead_radius: Option<Length>,
    /// Cut this far past the start again before leaving (mm, or with a unit: 0.25in). Default: the job file's, else
    /// the profile's.
    #[arg(long, allow_negative_numbers = true)]
    overcut: Option<Length>,
    /// Stop on the contour instead of leaving by a lead-out.
    #[arg(long)]
    no_lead_out: bool,
    /// Tabs on the outline: this many, spread along it.
    #[arg(long)]
    tabs: Option<usize>,
    /// Tabs on the outline: one about every this long along it (mm, or with a
    /// unit: 6in).
    #[arg(long, allow_negative_numbers = true)]
    tab_spacing: Option<Length>,
    /// Length of each tab along the edge (mm, or with a unit: 0.25in). Default by kind of machine.
    #[arg(long, allow_negative_numbers = true)]
    tab_width: Option<Length>,
    /// Mills and routers: height of each tab above the floor of the cut (mm, or with a unit: 0.25in). Default by kind
    /// of machine.
    #[arg(long, allow_negative_numbers = true)]
    tab_height: Option<Length>,
    /// Where the program's X0 Y0 is on the part: drawing (the drawing's own origin, the
    /// default), lower-left, lower-right, upper-left, upper-right or centre of the outline's box
    /// (of everything cut when there is no outline), or a drawing point X,Y in mm. Z0 is always
    /// the top of the stock (the sheet's top on laser, plasma and waterjet), depths measured
    /// down from it. A job file's `zero` applies when this is not given.
    #[arg(long, allow_hyphen_values = true, value_name = "WHERE")]
    zero: Option<WorkZero>,
    /// The work offset the program runs from: G54 … G59. Default: the job file's, else the
    /// machine profile's start block (G54 in the bundled profiles).
    #[arg(long, value_name = "G5x")]
    work_offset: Option<WorkOffset>,
    /// Straight moves (G1) only, no arcs (G2/G3).
    #[arg(long)]
    lines_only: bool,
    /// Keep all deviation on the scrap side of the exact curve, so that no edge loses material
    /// (more moves for the same tolerance).
    #[arg(long)]
    scrap_side_only: bool,
}

/// How a mill or router enters the material.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
enum EntryArg {
    Helix,
    Zigzag,
    Straight,
}

/// The demo drawing's file name, as written to `demo-parts/` and named in the outputs.
const DEMO_NAME: &str = "truss-bracket.dxf";

fn main() {
    // A panic inside the DXF library is contained by the reader and becomes a clear error; any
    // other panic is a bug of ours, said in one line instead of a backtrace.
    std::panic::set_hook(Box::new(|info| {
        if !conicut::read::library_panicking() {
            eprintln!(
                "error: conicut stopped on an internal error, which is a bug: {info}. Please \
                 report it with the drawing and the command line"
            );
        }
    }));
    let cli = Cli::parse();
    if let Err(e) = run(cli) {
        eprintln!("error: {e:#}");
        // `check`: 2 when something could not be read, 1 for findings (and every other failure).
        let code = if e.downcast_ref::<CheckUnreadable>().is_some() {
            2
        } else {
            1
        };
        std::process::exit(code);
    }
}

/// The largest program `check` reads (bytes): far beyond any real program, and a guard against
/// a device or a runaway file.
const MAX_PROGRAM_BYTES: u64 = 1 << 30;

/// The program's text for `check`: a regular file of at most [`MAX_PROGRAM_BYTES`], UTF-8 (the
/// line of the first byte that is not), a byte-order mark left out, CR-only line ends read as
/// line ends.
fn read_program_text(path: &Path) -> std::result::Result<String, CheckUnreadable> {
    let fail =
        |why: String| CheckUnreadable(format!("cannot read the program {}: {why}", path.display()));
    let meta = fs::metadata(path).map_err(|e| fail(e.to_string()))?;
    if !meta.is_file() {
        return Err(fail("it is not a regular file".into()));
    }
    if meta.len() > MAX_PROGRAM_BYTES {
        return Err(fail(format!(
            "it is {} bytes long, more than the {MAX_PROGRAM_BYTES} this checker reads",
            meta.len()
        )));
    }
    let bytes = fs::read(path).map_err(|e| fail(e.to_string()))?;
    let text = String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        let line = 1 + e.as_bytes()[..at].iter().filter(|&&b| b == b'\n').count();
        fail(format!(
            "line {line} holds a byte that is not UTF-8 text (save the program as plain ASCII \
             or UTF-8)"
        ))
    })?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    Ok(if text.contains('\r') && !text.contains('\n') {
        text.replace('\r', "\n")
    } else {
        text.to_string()
    })
}

/// `conicut check` could not read its program, drawing, job or profile (exit code 2).
#[derive(Debug)]
struct CheckUnreadable(String);

impl std::fmt::Display for CheckUnreadable {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for CheckUnreadable {}

/// `conicut check` found this many things that must be fixed (exit code 1).
#[derive(Debug)]
struct CheckFindings(usize);

impl std::fmt::Display for CheckFindings {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} finding(s) must be fixed before this program is run (listed above)",
            self.0
        )
    }
}

impl std::error::Error for CheckFindings {}

/// Reads the job file and every CSV of points it names (paths relative to the job file).
fn read_job(path: &Path) -> Result<(JobFile, BTreeMap<String, Vec<Point>>)> {
    let text = fs::read_to_string(path)
        .with_context(|| format!("cannot read the job file {}", path.display()))?;
    let job =
        parse_job_file(&text, &path.display().to_string()).map_err(|e| anyhow::anyhow!("{e}"))?;
    let base = path.parent().unwrap_or(Path::new("."));
    let mut csv = BTreeMap::new();
    for f in &job.features {
        if let FeatureSource::Fit {
            points: FitPoints::Csv(name),
            ..
        } = &f.source
        {
            let p = base.join(name);
            let text = fs::read_to_string(&p).with_context(|| {
                format!(
                    "feature \"{}\" (job file line {}): cannot read the points file {}",
                    f.name,
                    f.line,
                    p.display()
                )
            })?;
            let pts = parse_points_csv(&text, &p.display().to_string(), job.units)
                .map_err(|e| anyhow::anyhow!("{e}"))?;
            csv.insert(name.clone(), pts);
        }
    }
    Ok((job, csv))
}

/// The drawing's bytes, its file name and stem.
fn read_drawing(drawing: &Path) -> Result<(Vec<u8>, String, String)> {
    let bytes = fs::read(drawing)
        .with_context(|| format!("cannot read the drawing {}", drawing.display()))?;
    let file_name = drawing
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| drawing.display().to_string());
    let stem = drawing
        .file_stem()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "part".into());
    Ok((bytes, file_name, stem))
}

/// The request: the command line's settings and the job file (with its CSVs) read.
fn request(file_name: String, input: &DrawingArgs, cut: Option<&CutArgs>) -> Result<JobSettings> {
    let (job, csv_points) = match &input.job {
        Some(p) => {
            let (j, c) = read_job(p)?;
            (Some(j), c)
        }
        None => (None, BTreeMap::new()),
    };
    Ok(JobSettings {
        file_name,
        units: input.units,
        bay_layer: input.bay_layer.clone(),
        max_gap: input.max_gap.0,
        margin: input.margin.0,
        tool_diameter: None,
        fallback_tool_diameter: None,
        tolerance: cut.map_or(defaults::TOLERANCE_MM, |c| c.tolerance.0),
        depth: cut.and_then(|c| mm(c.depth)),
        stepdown: cut.and_then(|c| mm(c.stepdown)),
        ramp_angle_deg: match cut {
            Some(c) if c.entry == Some(EntryArg::Straight) => None,
            Some(c) => Some(c.ramp_angle.unwrap_or(defaults::RAMP_ANGLE_DEG)),
            None => Some(defaults::RAMP_ANGLE_DEG),
        },
        helical_entry: cut.is_none_or(|c| c.entry.is_none_or(|e| e == EntryArg::Helix)),
        cut_feed: cut.and_then(|c| c.feed),
        plunge_feed: cut.and_then(|c| c.plunge_feed),
        spindle_speed: cut.and_then(|c| c.spindle_speed),
        milling_flags: cut.map(milling_flags).unwrap_or_default(),
        leads: cut.map_or_else(LeadRequest::default, |c| LeadRequest {
            kind: c.lead,
            length: mm(c.lead_length),
            radius: mm(c.lead_radius),
            overcut: mm(c.overcut),
            lead_out: c.no_lead_out.then_some(false),
        }),
        direction: cut.map_or(Direction::Climb, |c| c.direction),
        tabs: cut
            .filter(|c| {
                c.tabs.is_some()
                    || c.tab_spacing.is_some()
                    || c.tab_width.is_some()
                    || c.tab_height.is_some()
            })
            .map(|c| TabRequest {
                count: c.tabs,
                spacing: mm(c.tab_spacing),
                width: mm(c.tab_width),
                height: mm(c.tab_height),
            }),
        finish_allowance: cut.and_then(|c| mm(c.finish_allowance)),
        pocket_stepover: cut.and_then(|c| mm(c.stepover)),
        lines_only: cut.is_some_and(|c| c.lines_only),
        scrap_side_only: cut.is_some_and(|c| c.scrap_side_only),
        job,
        csv_points,
        cut_layers: input.cut_layers.clone(),
        skip_layers: input.skip_layers.clone(),
        zero: cut.and_then(|c| c.zero),
        work_offset: cut.and_then(|c| c.work_offset),
    })
}

/// A length option's millimetres.
fn mm(length: Option<Length>) -> Option<f64> {
    length.map(|l| l.0)
}

/// The milling-only options given on the command line, by flag.
fn milling_flags(c: &CutArgs) -> Vec<String> {
    [
        ("--depth", c.depth.is_some()),
        ("--stepdown", c.stepdown.is_some()),
        ("--entry", c.entry.is_some()),
        ("--ramp-angle", c.ramp_angle.is_some()),
        ("--tab-height", c.tab_height.is_some()),
        ("--spindle-speed", c.spindle_speed.is_some()),
    ]
    .into_iter()
    .filter(|(_, given)| *given)
    .map(|(flag, _)| flag.to_string())
    .collect()
}

/// Each command: parse (clap, above) → read the inputs → resolve the settings → run the
/// pipeline → write the outputs.
fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Demo {
            out,
            machine,
            cut,
            margin,
            tool_diameter,
            job,
            html,
            force,
        } => {
            let machine_read = bundled_profile(&machine)?;
            let input = DrawingArgs {
                job,
                units: None,
                bay_layer: DEFAULT_BAY_LAYER.to_string(),
                margin,
                max_gap: Length(DEFAULT_MAX_GAP),
                cut_layers: None,
                skip_layers: None,
            };
            let mut request = request(DEMO_NAME.to_string(), &input, Some(&cut))?;
            // The demo's own stock and end mill; cut-through kinds use their kerf.
            request.tool_diameter = mm(tool_diameter);
            request.fallback_tool_diameter = Some(defaults::DEMO_TOOL_DIAMETER_MM);
            request.depth = Some(mm(cut.depth).unwrap_or(conicut::demo::CUT_DEPTH));
            let resolved = resolve(&request, &machine_read)?;
            let bytes = conicut::demo::demo_dxf_bytes();
            let stem = demo_stem(&machine);
            let title = format!("conicut: {stem}");
            let output = run_resolved_viewed(
                &bytes,
                &machine_read.profile,
                &request,
                &resolved,
                &|_| {},
                html.then_some(title.as_str()),
            )?;
            let ext = machine_read.profile.program_extension().to_string();
            print!(
                "{}",
                write_outputs_with(output, &out, &stem, &ext, None, force)?.to_text()
            );
            Ok(())
        }
        Command::Solve {
            drawing,
            input,
            json,
        } => {
            let (bytes, file_name, _) = read_drawing(&drawing)?;
            let request = request(file_name, &input, None)?;
            let listing = solve_job(&bytes, &request)?;
            if json {
                println!("{}", listing.to_json());
            } else {
                print!("{}", listing.to_text());
            }
            Ok(())
        }
        Command::Check {
            program,
            against,
            machine,
            tool_diameter,
            json,
            svg,
            html,
            input,
            cut,
        } => {
            let text = read_program_text(&program)?;
            let unreadable = |e: anyhow::Error| CheckUnreadable(format!("{e:#}"));
            let machine = read_profile(&machine).map_err(unreadable)?;
            let (bytes, file_name, _) = read_drawing(&against).map_err(unreadable)?;
            let mut request = request(file_name, &input, Some(&cut)).map_err(unreadable)?;
            request.tool_diameter = mm(tool_diameter);
            let resolved = resolve(&request, &machine).map_err(|e| unreadable(e.into()))?;
            let checked = check_job(
                &text,
                &bytes,
                &machine.profile,
                &request,
                &resolved,
                &Pictures {
                    svg: svg.is_some(),
                    html: html
                        .as_ref()
                        .map(|_| format!("conicut check: {}", program.display())),
                },
            )
            .map_err(|e| unreadable(e.into()))?;
            let files: Vec<(PathBuf, &str)> = [(&svg, &checked.picture), (&html, &checked.view)]
                .into_iter()
                .filter_map(|(path, body)| Some((path.clone()?, body.as_deref()?)))
                .collect();
            write_named_files(&files)?;
            if json {
                println!("{}", checked.to_json());
            } else {
                print!("{}", checked.to_text(&program.display().to_string()));
            }
            if checked.must_fix() > 0 {
                return Err(CheckFindings(checked.must_fix()).into());
            }
            Ok(())
        }
        Command::Plan {
            drawings,
            machine,
            tool_diameter,
            out,
            quiet,
            dxf_out,
            html,
            force,
            input,
            cut,
        } => {
            let machine = read_profile(&machine)?;
            let drawings = batch::expand(&drawings)?;
            let plan = PlanArgs {
                machine: &machine,
                tool_diameter,
                input: &input,
                cut: &cut,
                dxf_out,
                html,
                force,
            };
            if let [drawing] = drawings.as_slice() {
                let progress = Progress::new(quiet, 1);
                let dir = out.unwrap_or_else(|| {
                    PathBuf::from(format!("{}-conicut", batch::stem_of(drawing)))
                });
                let result = plan_one(&plan, drawing, &dir, &|step| {
                    progress.step(0, &batch::stem_of(drawing), step)
                });
                progress.finish();
                print!("{}", result?.to_text());
                Ok(())
            } else {
                plan_batch(&plan, &drawings, &out.unwrap_or_default(), quiet)
            }
        }
    }
}

/// What `plan` runs every drawing with.
struct PlanArgs<'a> {
    machine: &'a Machine,
    tool_diameter: Option<Length>,
    input: &'a DrawingArgs,
    cut: &'a CutArgs,
    /// Also write the copy of the drawing with the solved ellipses.
    dxf_out: bool,
    /// Also write the interactive page.
    html: bool,
    /// Replace files under the output names that no earlier run wrote.
    force: bool,
}

/// Plans one drawing and writes its outputs into `dir`; the report.
fn plan_one(
    plan: &PlanArgs,
    drawing: &Path,
    dir: &Path,
    watch: &dyn Fn(Step),
) -> Result<conicut::report::Report> {
    let (bytes, file_name, stem) = read_drawing(drawing)?;
    let mut request = request(file_name, plan.input, Some(plan.cut))?;
    request.tool_diameter = mm(plan.tool_diameter);
    let resolved = resolve(&request, plan.machine)?;
    let title = format!("conicut: {}", drawing.display());
    let output = run_resolved_viewed(
        &bytes,
        &plan.machine.profile,
        &request,
        &resolved,
        watch,
        plan.html.then_some(title.as_str()),
    )?;
    let drawing = if plan.dxf_out {
        Some(conicut::pipeline::office::solved_drawing(
            &bytes,
            &request,
            &output.report,
        )?)
    } else {
        None
    };
    let ext = plan.machine.profile.program_extension();
    write_outputs_with(output, dir, &stem, ext, drawing, plan.force)
}

/// Plans every drawing, each into its own folder inside `parent`, whatever the others do;
/// prints each failure as it happens and the summary at the end, and fails if any failed.
fn plan_batch(plan: &PlanArgs, drawings: &[PathBuf], parent: &Path, quiet: bool) -> Result<()> {
    let folders = batch::output_folders(drawings, parent)?;
    let progress = Progress::new(quiet, drawings.len());
    let mut outcomes = Vec::with_capacity(drawings.len());
    for (k, (drawing, dir)) in drawings.iter().zip(&folders).enumerate() {
        let started = std::time::Instant::now();
        let name = batch::stem_of(drawing);
        // A bug on one drawing (a panic) fails that drawing only; the others still run.
        let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            plan_one(plan, drawing, dir, &|step| progress.step(k, &name, step))
        }))
        .unwrap_or_else(|_| {
            Err(anyhow::anyhow!(
                "{}: conicut stopped on an internal error (said above); nothing was written \
                 for it",
                drawing.display()
            ))
        });
        if let Err(e) = &result {
            progress.bar_suspended(|| eprintln!("error: {e:#}"));
        }
        outcomes.push(batch::Outcome {
            drawing: drawing.clone(),
            seconds: started.elapsed().as_secs_f64(),
            result: result
                .map(|report| (report.features.len(), dir.clone()))
                .map_err(|e| format!("{e:#}")),
        });
    }
    progress.finish();
    print!("{}", batch::summary(&outcomes));
    let failed = outcomes.iter().filter(|o| o.result.is_err()).count();
    if failed > 0 {
        bail!("{failed} of {} drawings failed (see above)", outcomes.len());
    }
    Ok(())
}

/// A bundled profile by its stem (`metric-mill`, `laser`, …).
fn bundled_profile(machine: &str) -> Result<Machine> {
    let wanted = format!("machine-profiles/{machine}.toml");
    let Some((file, text)) = BUNDLED_PROFILES.iter().find(|(f, _)| *f == wanted) else {
        bail!(
            "there is no bundled profile \"{machine}\"; choose one of {}",
            bundled_names().join(", ")
        );
    };
    Machine::from_toml(text, file).map_err(|e| anyhow::anyhow!("{e}"))
}

/// The names of the bundled profiles.
fn bundled_names() -> Vec<&'static str> {
    BUNDLED_PROFILES
        .iter()
        .filter_map(|(f, _)| f.strip_prefix("machine-profiles/"))
        .filter_map(|f| f.strip_suffix(".toml"))
        .collect()
}

/// A machine profile read from a file, or a bundled one by its name when no such file exists.
fn read_profile(path: &Path) -> Result<Machine> {
    let name = path.to_string_lossy();
    if !path.exists() && bundled_names().contains(&name.as_ref()) {
        return bundled_profile(&name);
    }
    let text = fs::read_to_string(path).with_context(|| {
        format!(
            "cannot read the machine profile {}; give the path of a profile file, or the name \
             of a bundled one: {}",
            path.display(),
            bundled_names().join(", ")
        )
    })?;
    Machine::from_toml(&text, &path.display().to_string()).map_err(|e| anyhow::anyhow!("{e}"))
}

/// The demo's output stem: `truss-bracket` on the metric mill, else with the profile's name.
fn demo_stem(machine: &str) -> String {
    if machine == "metric-mill" {
        "truss-bracket".to_string()
    } else {
        format!("truss-bracket-{machine}")
    }
}

/// Writes the outputs into `dir`, all or none (the program as `<stem>.<ext>`, the profile's
/// extension), with the copy of the drawing (`--dxf-out`) when given; the report, naming the
/// files.
fn write_outputs_with(
    mut output: JobOutput,
    dir: &Path,
    stem: &str,
    ext: &str,
    drawing: Option<String>,
    force: bool,
) -> Result<conicut::report::Report> {
    let mut names = vec![
        ("program", format!("{stem}.{ext}")),
        ("preview", format!("{stem}.svg")),
        ("report_text", format!("{stem}-report.txt")),
        ("report_json", format!("{stem}-report.json")),
    ];
    if drawing.is_some() {
        names.push(("solved_drawing", format!("{stem}-solved.dxf")));
    }
    if output.view.is_some() {
        names.push(("view", format!("{stem}.html")));
    }
    let file_names: Vec<String> = names.iter().map(|(_, n)| n.clone()).collect();
    let prepared = outputs::prepare(dir, &file_names, Some(&names[3].1), force)?;
    output.report.files = names
        .iter()
        .map(|(role, name)| OutputFile {
            role: role.to_string(),
            path: dir.join(name).display().to_string(),
            replaced: prepared.replaced.contains(name),
        })
        .collect();
    if let Some(note) = prepared.recovered {
        output.report.notes.push(note);
    }
    let text = output.report.to_text();
    let json = output.report.to_json();
    let mut contents = vec![&output.program, &output.preview, &text, &json];
    if let Some(d) = &drawing {
        contents.push(d);
    }
    if let Some(v) = &output.view {
        contents.push(v);
    }
    let files: Vec<OutputBody> = names
        .iter()
        .zip(contents)
        .map(|((_, name), body)| OutputBody {
            name: name.clone(),
            body: body.as_bytes(),
        })
        .collect();
    outputs::commit(dir, &files)?;
    Ok(output.report)
}

/// Writes files the user named one by one (`check --svg FILE --html FILE`): each replaces what
/// is under its name and is written whole or not at all; the second may fail after the first
/// was written.
fn write_named_files(files: &[(PathBuf, &str)]) -> Result<()> {
    for (path, body) in files {
        let dir = path
            .parent()
            .filter(|d| !d.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        let Some(name) = path.file_name() else {
            bail!("{} names no file", path.display());
        };
        let name = name.to_string_lossy().into_owned();
        outputs::prepare(dir, std::slice::from_ref(&name), None, true)?;
        outputs::commit(
            dir,
            &[OutputBody {
                name,
                body: body.as_bytes(),
            }],
        )?;
    }
    Ok(())
}
