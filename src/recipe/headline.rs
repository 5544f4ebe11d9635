//! The headline: a few lines a person reads first, from the typed report.
//! Levels carry "dB(A)" only where the A-weighting applies (sound pressure).

use super::report::{db_unit, RunReport, StepReport};
use crate::audit::Status;

pub(crate) fn headline(r: &RunReport) -> Vec<String> {
    let mut out = Vec::new();
    // path analyses lead; responses are shown when there is no path analysis
    let has_paths = r.steps.iter().any(|s| s.op == "paths");
    let shown = |s: &&StepReport| s.op == "paths" || (!has_paths && s.op == "respond");
    for st in r.steps.iter().filter(shown) {
        for row in st.levels.iter().flatten() {
            let (Some(overall), Some(unweighted)) = (row.overall_db, row.overall_unweighted_db)
            else {
                continue;
            };
            let u = db_unit(row.weighting);
            let interval = match (row.overall_interval_95_db, &st.uncertainty) {
                (Some([lo, hi]), Some(un)) => format!(
                    ", 95 % interval {lo:.1}–{hi:.1} {u} ({})",
                    interval_source(&un.method)
                ),
                _ => String::new(),
            };
            let loudest = r
                .sweep
                .as_ref()
                .and_then(|sw| super::sweep::loudest_speed(sw, &row.dof, u))
                .unwrap_or_default();
            if row.weighting == crate::levels::Weighting::Z {
                out.push(format!(
                    "{} at {}: {overall:.1} dB ({}){interval}{loudest}",
                    st.id, row.dof, row.reference
                ));
            } else {
                out.push(format!(
                    "{} at {}: {overall:.1} {u}, {unweighted:.1} dB unweighted ({}){interval}{loudest}",
                    st.id, row.dof, row.reference
                ));
            }
            let lines: Vec<String> = row
                .top_lines
                .iter()
                .map(|l| format!("{} Hz {:.1} {u}", l.hz, l.db))
                .collect();
            out.push(format!("  strongest lines: {}", lines.join(", ")));
            let mut bands: Vec<(&String, f64)> = row
                .bands
                .iter()
                .zip(&row.band_db)
                .filter_map(|(b, v)| Some((b, (*v)?)))
                .collect();
            bands.sort_by(|a, b| b.1.total_cmp(&a.1));
            let top: Vec<String> = bands
                .iter()
                .take(3)
                .map(|(b, v)| format!("{b} Hz {v:.1} {u}"))
                .collect();
            out.push(format!("  loudest 1/3-octave bands: {}", top.join(", ")));
        }
        for t in st.ranking.iter().flat_map(|r| &r.targets) {
            let u = db_unit(t.weighting);
            let paths: Vec<String> = t
                .overall
                .iter()
                .map(|p| {
                    format!(
                        "{} {:.1} {u} ({:.0} %)",
                        p.path,
                        p.level_db,
                        100.0 * p.share
                    )
                })
                .collect();
            out.push(format!(
                "  paths ranked at {}: {}",
                t.target,
                paths.join("; ")
            ));
            let swaps: Vec<String> = t
                .overall
                .windows(2)
                .filter_map(|w| {
                    let c = w[0].swap_chance_with_next?;
                    Some(format!("{} / {} {:.0} %", w[0].path, w[1].path, 100.0 * c))
                })
                .collect();
            if !swaps.is_empty() {
                out.push(format!(
                    "  chance that neighbouring paths swap ranks (from the stated input uncertainty): {}",
                    swaps.join(", ")
                ));
            }
        }
    }
    for v in &r.variants {
        for b in r.steps.iter().filter(shown) {
            let Some(vs) = v.steps.iter().find(|s| s.id == b.id) else {
                continue;
            };
            for (rb, rv) in b.levels.iter().flatten().zip(vs.levels.iter().flatten()) {
                let (Some(x), Some(y)) = (rb.overall_db, rv.overall_db) else {
                    continue;
                };
                let u = db_unit(rb.weighting);
                out.push(format!(
                    "variant '{}': {} at {}: {y:.1} {u} ({:+.1} dB)",
                    v.name,
                    b.id,
                    rb.dof,
                    y - x
                ));
                let Some(d) = v.band_change.get(&b.id) else {
                    continue;
                };
                let Some(t) = d.targets.iter().position(|t| t == &rb.dof) else {
                    continue;
                };
                let per: Vec<String> = d
                    .bands
                    .iter()
                    .zip(d.per_band_db.get(t).into_iter().flatten())
                    .filter_map(|(b, x)| Some(format!("{b} {:+.1}", (*x)?)))
                    .collect();
                if !per.is_empty() {
                    out.push(format!(
                        "  change by 1/3-octave band (Hz dB): {}",
                        per.join(", ")
                    ));
                }
            }
        }
    }
    for st in &r.steps {
        if let Some(un) = &st.uncertainty {
            if un.fraction_flagged > 0.0 {
                out.push(format!(
                    "{}: {:.0} % of the values unreliable{}",
                    st.id,
                    100.0 * un.fraction_flagged,
                    un.statements
                        .first()
                        .map(|s| format!("; {s}"))
                        .unwrap_or_default()
                ));
            }
        }
    }
    for (name, a) in &r.audit {
        for c in a.checks.iter().filter(|c| c.status == Status::Flag) {
            out.push(format!("audit of '{name}': {}: {}", c.check, c.summary));
        }
    }
    out
}

/// The interval's source in a few words: the input uncertainty, propagated
/// to first order to the lines and by Monte Carlo to the level.
fn interval_source(method: &str) -> String {
    let from = if method.contains("coherence") {
        "input FRF noise from coherence"
    } else if method.contains("repeated") {
        "scatter of repeated measurements"
    } else {
        "the stated input uncertainty"
    };
    format!("from {from}; first order to the lines, Monte Carlo to the level")
}
