//! Run history: each run of a recipe in a workspace, kept with its recipe
//! text, start time, duration, headline and results (or its error), so two
//! runs can be compared (the plots overlay their curves and draw the level
//! difference, [`crate::plot::PlotKind::Difference`]).
//!
//! The [`Workspace`](crate::workspace::Workspace) owns the history; its result
//! sets live in the workspace's set store under `run<N>:<k>`. The newest
//! [`KEEP_RUNS`] records stay; the curves of older successful runs are
//! dropped first when the kept results would exceed a quarter of the memory
//! budget (the record stays, marked `curves_kept: false`).

use crate::summary::SetSummary;
use serde::{Deserialize, Serialize};

/// How many runs a history keeps (older records are forgotten).
pub const KEEP_RUNS: usize = 12;

/// One run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunRecord {
    /// 1, 2, 3… in the order of the runs of this workspace.
    pub number: u32,
    /// The recipe text as run.
    pub recipe_text: String,
    /// The recipe's title ("" when it has none or did not parse).
    pub title: String,
    /// Start, milliseconds since 1970-01-01 UTC (the caller's clock).
    pub started_ms: f64,
    pub duration_ms: f64,
    /// The report's headline (levels at the targets, strongest lines…).
    pub headline: Vec<String>,
    /// The result sets (ids `run<N>:<k>`); empty for a failed run.
    pub results: Vec<SetSummary>,
    /// False once the result sets were dropped to stay within the budget,
    /// or when the record was put back without them.
    pub curves_kept: bool,
    /// The error of a failed run.
    pub error: Option<String>,
    /// How the run's sweep was split over the page's workers ("sweep
    /// 'NAME': 200 points on 2 workers (points 0..100, 100..200)"); absent
    /// when it was computed in one piece.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub split: Option<String>,
}

/// The id prefix of run `number`'s sets.
pub fn prefix(number: u32) -> String {
    format!("run{number}:")
}

/// True for the id of a run's set (`run<N>:<k>`).
pub fn is_run_id(id: &str) -> bool {
    id.strip_prefix("run")
        .and_then(|r| r.split_once(':'))
        .is_some_and(|(n, _)| !n.is_empty() && n.bytes().all(|b| b.is_ascii_digit()))
}

/// Milliseconds since 1970-01-01 UTC: the page's clock in the browser, the
/// system clock elsewhere.
pub fn now_ms() -> f64 {
    #[cfg(target_arch = "wasm32")]
    {
        js_sys::Date::now()
    }
    #[cfg(not(target_arch = "wasm32"))]
    {
        std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map(|d| d.as_secs_f64() * 1000.0)
            .unwrap_or(f64::NAN)
    }
}

/// Which records lose their curves, oldest first, so that the kept curves
/// fit in `budget` bytes: `sizes` holds each record's (number, bytes, kept),
/// newest last; the newest record always keeps its curves.
pub fn to_drop(sizes: &[(u32, u64, bool)], budget: u64) -> Vec<u32> {
    let mut total: u64 = sizes.iter().filter(|s| s.2).map(|s| s.1).sum();
    let mut out = Vec::new();
    for (n, bytes, kept) in sizes.iter().take(sizes.len().saturating_sub(1)) {
        if total <= budget {
            break;
        }
        if *kept {
            total = total.saturating_sub(*bytes);
            out.push(*n);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn oldest_curves_go_first_and_the_newest_stay() {
        let sizes = [(1, 40, true), (2, 40, false), (3, 40, true), (4, 40, true)];
        assert_eq!(to_drop(&sizes, 200), Vec::<u32>::new());
        assert_eq!(to_drop(&sizes, 80), vec![1]);
        assert_eq!(to_drop(&sizes, 10), vec![1, 3]);
        assert_eq!(to_drop(&[(7, 1000, true)], 1), Vec::<u32>::new());
    }

    #[test]
    fn run_ids_are_told_apart() {
        assert!(is_run_id("run12:0"));
        assert!(!is_run_id("runner:0") && !is_run_id("run:0") && !is_run_id("file:run1:0"));
    }

    #[test]
    fn the_clock_reads_a_date_after_2020() {
        // 2020-01-01T00:00:00Z is 1,577,836,800,000 ms after the epoch.
        assert!(now_ms() > 1_577_836_800_000.0);
    }
}
