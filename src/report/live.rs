//! The page's choice of target: the figures embedded in `index.html` for
//! its script (`live.js`) to recount every chance at a target the reader
//! picks, and the panel holding the control. The page stays one file that
//! works offline; with scripts off the panel stays hidden and the page
//! reads as written for the report's own target.
//!
//! Encoding: the target moves on a grid of 0.01 % (10 000 steps). Each
//! trial's figure of the target in force (availability, or readiness) is
//! kept as the highest step `k` with `figure >= k / 10 000` (compared as
//! the command line compares it, `k / 10 000` being the same number as
//! `--target` parses from its decimal), and each policy's trials as the
//! count at each step reached: `[k, count, k, count, ...]`. The chance
//! at step `k` is then the share of trials at `k` or above, exactly as
//! `frontier --policies ... --target` counts it on the same trials. Costs
//! do not depend on the target, so each policy carries its cost figure
//! only (the per-trial costs are in `trials.csv`).
//!
//! Owns: the embedded data and the panel. May use: `super::view`,
//! `model`, `serde_json`.

use std::collections::BTreeMap;

use super::view::{Kind, LEVELS, View};

/// Steps of the target grid in one.
pub const GRID: u32 = 10_000;

/// The script, inlined into the page.
const SCRIPT: &str = include_str!("live.js");

/// The highest grid step `k` (0 to `GRID`) with `x >= k / GRID`.
pub fn step_of(x: f64) -> u32 {
    let g = f64::from(GRID);
    let mut k = (x * g).floor().clamp(0.0, g) as u32;
    while k < GRID && x >= f64::from(k + 1) / g {
        k += 1;
    }
    while k > 0 && x < f64::from(k) / g {
        k -= 1;
    }
    k
}

/// The embedded data of a view, as JSON text safe inside a `<script>`.
fn data(v: &View<'_>, sets: &[String]) -> String {
    let policies: Vec<serde_json::Value> = v
        .policies
        .iter()
        .zip(sets)
        .map(|(p, sets)| {
            let mut counts: BTreeMap<u32, u64> = BTreeMap::new();
            for &x in p.summary.trial_measure() {
                *counts.entry(step_of(x)).or_insert(0) += 1;
            }
            let h: Vec<u64> = counts
                .into_iter()
                .flat_map(|(k, c)| [u64::from(k), c])
                .collect();
            serde_json::json!({
                "name": p.name(),
                "cost": p.cost.mean,
                "sets": sets,
                "h": h,
            })
        })
        .collect();
    let n = v.policies.first().map_or(0, |p| p.summary.trials());
    let measure = match v.policies.first().map(|p| p.summary.measure) {
        Some(crate::model::Measure::Readiness) => "readiness",
        _ => "availability",
    };
    let d = serde_json::json!({
        "grid": GRID,
        "target": v.target,
        "measure": measure,
        "n": n,
        "levels": LEVELS,
        "cur": v.cur(),
        "frontier": v.kind == Kind::Frontier,
        "policies": policies,
    });
    d.to_string().replace("</", "<\\/")
}

/// The panel and the script, placed after the page's header. `sets`: each
/// policy's settings in words, as the tables give them.
pub fn panel(v: &View<'_>, sets: &[String]) -> String {
    let target = 100.0 * v.target;
    format!(
        "<section id=\"wo-live\" class=\"box\" hidden aria-label=\"Another target\">\n\
<h2>Another target?</h2>\n\
<p>This report was written for a target of {target:.2}\u{a0}%. Choose another and {} recounted on the same trials.</p>\n\
<p><label for=\"wo-target\">Target, %: </label><input id=\"wo-target\" type=\"number\" min=\"0.01\" max=\"100\" step=\"0.01\" value=\"{target:.2}\"> \
<input id=\"wo-target-range\" type=\"range\" min=\"50\" max=\"100\" step=\"0.01\" value=\"{target}\" aria-label=\"Target, %\"> \
<button id=\"wo-reset\" type=\"button\">Back to {target:.2}\u{a0}%</button></p>\n\
<p id=\"wo-says\" aria-live=\"polite\"></p>\n\
</section>\n\
<script type=\"application/json\" id=\"wo-data\">{}</script>\n\
<script>\n{SCRIPT}</script>\n",
        match v.kind {
            Kind::Frontier =>
                "the frontier figure, the cheapest policy for each chance level and every policy's chance below are",
            Kind::Evaluate => "the policy's chance below is",
        },
        data(v, sets)
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steps_compare_as_the_target_parses() {
        // "0.9612" parses to the same double as 9612 / 10000 (both
        // correctly rounded), so a figure equal to it reaches step 9612.
        let t: f64 = "0.9612".parse().unwrap_or(f64::NAN);
        assert_eq!(t, 9612.0 / 10_000.0);
        assert_eq!(step_of(t), 9612);
        assert_eq!(step_of(f64::from_bits(t.to_bits() - 1)), 9611);
        assert_eq!(step_of(1.0), GRID);
        assert_eq!(step_of(0.0), 0);
        // Every step: the figure at the step itself reaches it, the double
        // just below does not.
        for k in 1..=GRID {
            let x = f64::from(k) / f64::from(GRID);
            assert_eq!(step_of(x), k);
            assert_eq!(step_of(f64::from_bits(x.to_bits() - 1)), k - 1);
        }
    }
}
