//! `conicut plan` on several drawings: which drawings a list of files and folders names, where
//! each one's outputs go, and the summary table printed when all have run.

use anyhow::{Result, bail};
use std::collections::HashMap;
use std::fs;
use std::path::{Path, PathBuf};

/// The drawings the command line names: files as given, and every `.dxf` (any case) directly
/// inside a folder, in name order. Refuses a path that is neither, and a folder without
/// drawings.
pub fn expand(paths: &[PathBuf]) -> Result<Vec<PathBuf>> {
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            let entries = fs::read_dir(p)
                .map_err(|e| anyhow::anyhow!("cannot read the folder {}: {e}", p.display()))?;
            let mut found: Vec<PathBuf> = entries
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|f| f.is_file() && is_dxf(f))
                .collect();
            if found.is_empty() {
                bail!(
                    "the folder {} holds no .dxf drawings; name the drawings or another folder",
                    p.display()
                );
            }
            found.sort();
            out.extend(found);
        } else if p.is_file() {
            out.push(p.clone());
        } else {
            bail!(
                "cannot read the drawing {}: no such file or folder",
                p.display()
            );
        }
    }
    Ok(out)
}

fn is_dxf(p: &Path) -> bool {
    p.extension()
        .is_some_and(|e| e.to_string_lossy().eq_ignore_ascii_case("dxf"))
}

/// The drawing's name without its folder and extension, which names its outputs.
pub fn stem_of(p: &Path) -> String {
    p.file_stem()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "part".into())
}

/// Each drawing's output folder: `<stem>-conicut` inside `parent`. Refuses two drawings that
/// would share one (same name in different folders), before anything runs.
pub fn output_folders(drawings: &[PathBuf], parent: &Path) -> Result<Vec<PathBuf>> {
    let mut seen: HashMap<String, &Path> = HashMap::new();
    let mut out = Vec::with_capacity(drawings.len());
    for d in drawings {
        let stem = stem_of(d);
        if let Some(first) = seen.insert(stem.to_lowercase(), d) {
            bail!(
                "{} and {} would both write into {}; plan them separately, each with its own \
                 --out, or rename one",
                first.display(),
                d.display(),
                parent.join(format!("{stem}-conicut")).display()
            );
        }
        out.push(parent.join(format!("{stem}-conicut")));
    }
    Ok(out)
}

/// How one drawing of a batch went.
pub struct Outcome {
    pub drawing: PathBuf,
    pub seconds: f64,
    /// The features cut and the output folder, or the error.
    pub result: Result<(usize, PathBuf), String>,
}

/// The table printed after a batch: one row per drawing, and a count of the failures.
pub fn summary(outcomes: &[Outcome]) -> String {
    let failed = outcomes.iter().filter(|o| o.result.is_err()).count();
    let width = outcomes
        .iter()
        .map(|o| o.drawing.display().to_string().chars().count())
        .max()
        .unwrap_or(7)
        .max(7);
    let mut s = format!(
        "conicut plan: {} drawings, {} written, {failed} failed\n\n",
        outcomes.len(),
        outcomes.len() - failed
    );
    s.push_str(&format!(
        "  {:<width$}  {:<6}  {:>8}  {:>8}  output or error\n",
        "drawing", "result", "features", "time (s)"
    ));
    for o in outcomes {
        let (result, features, detail) = match &o.result {
            Ok((n, dir)) => ("ok", n.to_string(), dir.display().to_string()),
            Err(e) => (
                "FAILED",
                "-".to_string(),
                e.lines().next().unwrap_or_default().to_string(),
            ),
        };
        s.push_str(&format!(
            "  {:<width$}  {result:<6}  {features:>8}  {:>8.2}  {detail}\n",
            o.drawing.display().to_string(),
            o.seconds
        ));
    }
    s
}
