//! The progress bar on stderr: shown only when stderr is a terminal, the user has not asked for
//! quiet, and the work has run longer than [`SHOW_AFTER`]; cleared when the work is done, so
//! that what stays on the screen is the report or the summary.

use conicut::pipeline::Step;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::time::Duration;

/// Work that finishes sooner shows no bar at all.
pub const SHOW_AFTER: Duration = Duration::from_millis(500);

/// A bar over the steps of one drawing, or over the drawings of a batch.
pub struct Progress {
    bar: ProgressBar,
    /// The bar counts drawings × steps.
    drawings: u64,
}

impl Progress {
    /// A bar for `drawings` drawings (1 for a single drawing), drawn only if wanted (above).
    pub fn new(quiet: bool, drawings: usize) -> Progress {
        let drawings = drawings.max(1) as u64;
        let bar = ProgressBar::with_draw_target(
            Some(drawings * Step::COUNT as u64),
            ProgressDrawTarget::hidden(),
        );
        if let Ok(style) = ProgressStyle::with_template("{elapsed:>4} [{bar:30}] {prefix} {msg}") {
            bar.set_style(style.progress_chars("=> "));
        }
        if !quiet && std::io::stderr().is_terminal() {
            // Shown once the work has lasted SHOW_AFTER, even in the middle of one long step.
            let later = bar.clone();
            std::thread::spawn(move || {
                std::thread::sleep(SHOW_AFTER);
                if !later.is_finished() {
                    later.set_draw_target(ProgressDrawTarget::stderr());
                    later.enable_steady_tick(Duration::from_millis(200));
                }
            });
        }
        Progress { bar, drawings }
    }

    /// Drawing number `drawing` (from 0), named `name`, starts `step`.
    pub fn step(&self, drawing: usize, name: &str, step: Step) {
        let prefix = if self.drawings > 1 {
            format!("{}/{} {name}:", drawing + 1, self.drawings)
        } else {
            format!("{name}:")
        };
        self.bar.set_prefix(prefix);
        self.bar.set_message(step.describe());
        self.bar
            .set_position(drawing as u64 * Step::COUNT as u64 + step.index() as u64);
    }

    /// Runs `f` (which prints to stderr) with the bar taken off the screen meanwhile.
    pub fn bar_suspended(&self, f: impl FnOnce()) {
        self.bar.suspend(f);
    }

    /// Removes the bar.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}
