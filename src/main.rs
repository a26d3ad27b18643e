//! The `conicut` command: reads files, runs the job, writes the outputs whole or not at all.

use anyhow::{Context, Result, bail};
use clap::{Args, Parser, Subcommand};
use conicut::chain::{DEFAULT_BAY_LAYER, DEFAULT_GAP_TOLERANCE};
use conicut::job::{JobOutput, JobSettings, run_job};
use conicut::post::MachineProfile;
use conicut::read::Units;
use conicut::report::OutputFile;
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
    /// Run the whole job on the bundled demo part (a truss bracket with four-sided bays) for
    /// the bundled metric mill profile.
    Demo {
        /// Folder for the outputs (created if missing).
        #[arg(long, default_value = "conicut-demo")]
        out: PathBuf,
        #[command(flatten)]
        cut: CutArgs,
        /// Edge margin: each bay side is moved inward by this much before solving (mm).
        #[arg(long, default_value_t = 4.0, allow_negative_numbers = true)]
        margin: f64,
        /// Cutter diameter (mm).
        #[arg(long, default_value_t = 6.0, allow_negative_numbers = true)]
        tool_diameter: f64,
    },
    /// Run the whole job on a drawing of your own.
    Plan {
        /// The DXF drawing.
        drawing: PathBuf,
        /// Machine profile (TOML), e.g. machine-profiles/metric-mill.toml.
        #[arg(long)]
        machine: PathBuf,
        /// Cutter diameter (mm).
        #[arg(long, allow_negative_numbers = true)]
        tool_diameter: f64,
        /// Folder for the outputs (created if missing). Default: `<drawing name>-conicut` in the
        /// current folder.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Units of a drawing that states none in its header ($INSUNITS): mm or in.
        #[arg(long)]
        units: Option<Units>,
        /// Layer holding the bays (matched ignoring case).
        #[arg(long, default_value = DEFAULT_BAY_LAYER)]
        bay_layer: String,
        /// Edge margin: each bay side is moved inward by this much before solving (mm).
        #[arg(long, default_value_t = 0.0, allow_negative_numbers = true)]
        margin: f64,
        /// Largest gap closed when joining drawing pieces into contours (mm).
        #[arg(long, default_value_t = DEFAULT_GAP_TOLERANCE, allow_negative_numbers = true)]
        gap_tolerance: f64,
        #[command(flatten)]
        cut: CutArgs,
    },
}

#[derive(Args, Debug)]
struct CutArgs {
    /// Largest distance between the emitted path and the exact curve (mm).
    #[arg(long, default_value_t = 0.01, allow_negative_numbers = true)]
    tolerance: f64,
    /// Cut depth below the work zero (mm, positive). Default: the machine profile's (the demo:
    /// through its 3 mm plate and 0.5 mm into the board below).
    #[arg(long, allow_negative_numbers = true)]
    depth: Option<f64>,
}

/// The demo drawing's file name, as written to `demo-parts/` and named in the outputs.
const DEMO_NAME: &str = "truss-bracket.dxf";

fn main() {
    let cli = Cli::parse();
    if let Err(e) = run(cli) {
        eprintln!("error: {e:#}");
        std::process::exit(1);
    }
}

fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Demo {
            out,
            cut,
            margin,
            tool_diameter,
        } => {
            let profile = MachineProfile::metric_mill()
                .map_err(|e| anyhow::anyhow!("the bundled metric mill profile: {e}"))?;
            let settings = JobSettings {
                file_name: DEMO_NAME.to_string(),
                units: None,
                bay_layer: DEFAULT_BAY_LAYER.to_string(),
                gap_tolerance: DEFAULT_GAP_TOLERANCE,
                margin,
                tool_diameter,
                tolerance: cut.tolerance,
                depth: Some(cut.depth.unwrap_or(conicut::demo::CUT_DEPTH)),
            };
            let bytes = conicut::demo::demo_dxf_bytes();
            let output = run_job(&bytes, &profile, &settings)?;
            finish(output, &out, "truss-bracket")
        }
        Command::Plan {
            drawing,
            machine,
            tool_diameter,
            out,
            units,
            bay_layer,
            margin,
            gap_tolerance,
            cut,
        } => {
            let profile_text = fs::read_to_string(&machine).with_context(|| {
                format!("cannot read the machine profile {}", machine.display())
            })?;
            let profile = MachineProfile::from_toml(&profile_text, &machine.display().to_string())
                .map_err(|e| anyhow::anyhow!("{e}"))?;
            let bytes = fs::read(&drawing)
                .with_context(|| format!("cannot read the drawing {}", drawing.display()))?;
            let file_name = drawing
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_else(|| drawing.display().to_string());
            let stem = drawing
                .file_stem()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_else(|| "part".into());
            let settings = JobSettings {
                file_name,
                units,
                bay_layer,
                gap_tolerance,
                margin,
                tool_diameter,
                tolerance: cut.tolerance,
                depth: cut.depth,
            };
            let output = run_job(&bytes, &profile, &settings)?;
            let out = out.unwrap_or_else(|| PathBuf::from(format!("{stem}-conicut")));
            finish(output, &out, &stem)
        }
    }
}

/// Writes the outputs into `dir` and prints the summary.
fn finish(mut output: JobOutput, dir: &Path, stem: &str) -> Result<()> {
    let names = [
        ("program", format!("{stem}.ngc")),
        ("preview", format!("{stem}.svg")),
        ("report_text", format!("{stem}-report.txt")),
        ("report_json", format!("{stem}-report.json")),
    ];
    output.report.files = names
        .iter()
        .map(|(role, name)| OutputFile {
            role: role.to_string(),
            path: dir.join(name).display().to_string(),
        })
        .collect();
    let text = output.report.to_text();
    let json = output.report.to_json();
    let contents = [&output.program, &output.preview, &text, &json];
    let files: Vec<(PathBuf, &str)> = names
        .iter()
        .zip(contents)
        .map(|((_, name), body)| (dir.join(name), body.as_str()))
        .collect();
    write_all_or_nothing(dir, &files)?;
    print!("{text}");
    Ok(())
}

/// Writes every file beside its final name, then renames them all into place; on any failure the
/// files already written beside are removed and nothing is renamed, so no output is left half
/// written.
fn write_all_or_nothing(dir: &Path, files: &[(PathBuf, &str)]) -> Result<()> {
    fs::create_dir_all(dir)
        .with_context(|| format!("cannot create the output folder {}", dir.display()))?;
    let temp = |p: &Path| {
        let mut name = p.file_name().unwrap_or_default().to_os_string();
        name.push(".partial");
        p.with_file_name(name)
    };
    let mut written = Vec::new();
    for (path, body) in files {
        let t = temp(path);
        if let Err(e) = fs::write(&t, body) {
            let _ = fs::remove_file(&t);
            for w in &written {
                let _ = fs::remove_file(w);
            }
            bail!("cannot write {}: {e}", t.display());
        }
        written.push(t);
    }
    for ((path, _), t) in files.iter().zip(&written) {
        fs::rename(t, path).with_context(|| format!("cannot write {}", path.display()))?;
    }
    Ok(())
}
