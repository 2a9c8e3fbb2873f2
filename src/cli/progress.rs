//! Progress bars on a terminal; silence when output is piped.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use wearout::run::Progress;

/// A progress bar on stderr, hidden unless stderr is a terminal.
pub struct Bar {
    bar: ProgressBar,
}

impl Bar {
    /// A bar for `total` trials, labelled `what`.
    pub fn new(what: &str, total: u64) -> Self {
        let bar = ProgressBar::new(total);
        if std::io::stderr().is_terminal() && std::env::var_os("CI").is_none() {
            bar.set_draw_target(ProgressDrawTarget::stderr());
            if let Ok(style) =
                ProgressStyle::with_template("{msg:>12} [{bar:40}] {pos}/{len} trials, {eta} left")
            {
                bar.set_style(style.progress_chars("=> "));
            }
        } else {
            bar.set_draw_target(ProgressDrawTarget::hidden());
        }
        bar.set_message(what.to_string());
        Bar { bar }
    }

    /// Remove the bar from the screen.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}

impl Progress for Bar {
    fn phase(&self, name: &str, total: u64) {
        self.bar.set_message(name.to_string());
        self.bar.set_length(total);
        self.bar.set_position(0);
    }

    fn advance(&self, n: u64) {
        self.bar.inc(n);
    }

    fn cancelled(&self) -> bool {
        super::interrupt::cancelled()
    }
}
