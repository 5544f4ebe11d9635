//! Fitness audit of FRF data before they are coupled or used for prediction.
//!
//! Checks, each with status pass / flag / not applicable, the frequency
//! ranges where it flags (merged into fractional-octave bands) and a one-line
//! summary:
//! * **reciprocity**: H_ij = H_ji for DOF pairs present both ways with the
//!   same quantity pair (Maxwell–Betti; textbook). Measure: relative
//!   difference |H_ij − H_ji| / max(|H_ij|, |H_ji|) per line.
//! * **passivity**: with e^{+iωt}, the real part of every driving-point
//!   mobility (or impedance) is ≥ 0 (energy conservation; textbook).
//!   Receptance and accelerance are converted to mobility, dynamic stiffness
//!   and apparent mass to impedance, first.
//! * **coherence**, where supplied, at or above a threshold (default 0.9,
//!   common practice).
//! * **linearity** from two sets of one component measured at different
//!   excitation levels: homogeneity says the FRFs are equal; the largest
//!   level difference of the lines of each band is flagged above a tolerance
//!   (default 1 dB, common practice). See [`audit_linearity`].
//! * **conditioning** of a square matrix with outputs = inputs (an interface
//!   matrix to be inverted): 2-norm condition number per line above a limit
//!   (default 1000, common practice: relative errors in the data can grow by
//!   up to this factor in the inverse).
//! * **grid**: uneven spacing, and resonance peaks resolved by fewer than
//!   three lines above half power (common practice).
//! * **import**: warnings made while the file was read.

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfKind, FrfSet};
use crate::levels::{self, Band};
use crate::units::Quantity;
use num_complex::Complex64;

/// The caution printed with every audit.
pub const CAUTION: &str = crate::predict::CAUTION;

/// Outcome of one check.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Status {
    Pass,
    Flag,
    NotApplicable,
}

impl Status {
    pub fn name(self) -> &'static str {
        match self {
            Status::Pass => "pass",
            Status::Flag => "FLAG",
            Status::NotApplicable => "n/a",
        }
    }
}

/// Thresholds of the audit.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct AuditOptions {
    /// Largest relative reciprocity difference accepted (default 0.1, common practice).
    pub reciprocity_tol: f64,
    /// Passivity: Re(Y) below −tol·|Y| is flagged (default 1e-9: rounding only).
    pub passivity_rel_tol: f64,
    /// Smallest coherence accepted (default 0.9, common practice).
    pub coherence_min: f64,
    /// Largest homogeneity error accepted, dB (default 1 dB, common practice).
    pub linearity_tol_db: f64,
    /// Largest condition number accepted (default 1000, common practice).
    pub condition_max: f64,
    /// Fewest lines above half power at a resonance peak (default 3, common practice).
    pub min_lines_per_peak: usize,
    /// Band width 1/b in which flagged ranges are reported (default 3).
    pub band_fraction: u32,
}

impl Default for AuditOptions {
    fn default() -> Self {
        AuditOptions {
            reciprocity_tol: 0.1,
            passivity_rel_tol: 1e-9,
            coherence_min: 0.9,
            linearity_tol_db: 1.0,
            condition_max: 1000.0,
            min_lines_per_peak: 3,
            band_fraction: 3,
        }
    }
}

/// A range of adjacent bands where a check flags.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FlaggedRange {
    /// Lower edge of the first band, Hz (0 for a line at 0 Hz).
    pub lower: f64,
    /// Upper edge of the last band, Hz.
    pub upper: f64,
    /// Nominal label of the first and last band, e.g. "100" and "160".
    pub first_band: String,
    pub last_band: String,
    /// Number of flagged lines in the range.
    pub lines: usize,
    /// The worst value of the check's measure in the range.
    pub worst: f64,
    /// Frequency of the worst line, Hz.
    pub worst_at: f64,
    /// Entries (DOF pairs or DOFs) flagged in the range, at most eight.
    pub entries: Vec<String>,
}

impl FlaggedRange {
    /// Text such as "100–160 Hz".
    pub fn label(&self) -> String {
        if self.upper <= 0.0 {
            "0 Hz".into()
        } else if self.first_band == self.last_band {
            format!("{} Hz", self.first_band)
        } else {
            format!("{}–{} Hz", self.first_band, self.last_band)
        }
    }
}

/// The result of one check.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CheckResult {
    /// "reciprocity", "passivity", "coherence", "linearity", "conditioning", "grid", "import".
    pub check: String,
    pub status: Status,
    pub flagged: Vec<FlaggedRange>,
    /// One line for a table.
    pub summary: String,
    /// Further remarks (not shown in the compact table).
    #[serde(default)]
    pub details: Vec<String>,
}

/// All checks of one set.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct AuditReport {
    pub set: String,
    pub kind: FrfKind,
    pub lines: usize,
    pub checks: Vec<CheckResult>,
    pub caution: String,
}

impl AuditReport {
    pub fn flagged(&self) -> bool {
        self.checks.iter().any(|c| c.status == Status::Flag)
    }
    pub fn check(&self, name: &str) -> Option<&CheckResult> {
        self.checks.iter().find(|c| c.check == name)
    }
    /// A compact text table: check, status, flagged bands, summary.
    pub fn table(&self) -> String {
        let mut s = format!(
            "{} ({}, {} lines)\n",
            self.set,
            self.kind.name(),
            self.lines
        );
        let rows: Vec<[String; 4]> = self
            .checks
            .iter()
            .map(|c| {
                let bands = if c.flagged.is_empty() {
                    "-".to_string()
                } else {
                    let mut v: Vec<String> = c.flagged.iter().take(4).map(|r| r.label()).collect();
                    if c.flagged.len() > 4 {
                        v.push(format!("+{} more", c.flagged.len() - 4));
                    }
                    v.join(", ")
                };
                [
                    c.check.clone(),
                    c.status.name().to_string(),
                    bands,
                    c.summary.clone(),
                ]
            })
            .collect();
        let head = ["check", "status", "flagged bands", "summary"];
        let mut w = [0usize; 3];
        for (i, wi) in w.iter_mut().enumerate() {
            *wi = rows
                .iter()
                .map(|r| r[i].chars().count())
                .chain([head[i].len()])
                .max()
                .unwrap_or(0);
        }
        let line = |r: [&str; 4]| {
            format!(
                "  {:<a$}  {:<b$}  {:<c$}  {}\n",
                r[0],
                r[1],
                r[2],
                r[3],
                a = w[0],
                b = w[1],
                c = w[2]
            )
        };
        s.push_str(&line(head));
        for r in &rows {
            s.push_str(&line([&r[0], &r[1], &r[2], &r[3]]));
        }
        s
    }
}

/// Collects flagged lines and merges them into band ranges.
struct Flags<'a> {
    freqs: &'a [f64],
    bands: Vec<Band>,
    /// per line: worst value, entries
    hit: Vec<Option<(f64, Vec<String>)>>,
    /// true when larger values are worse
    larger_worse: bool,
}

impl<'a> Flags<'a> {
    fn new(freqs: &'a [f64], b: u32, larger_worse: bool) -> Flags<'a> {
        let lo = freqs.iter().copied().find(|&f| f > 0.0);
        let hi = freqs.last().copied();
        let bands = match (lo, hi) {
            (Some(l), Some(h)) => levels::bands_covering(b, l, h).unwrap_or_default(),
            _ => Vec::new(),
        };
        Flags {
            freqs,
            bands,
            hit: vec![None; freqs.len()],
            larger_worse,
        }
    }
    fn add(&mut self, k: usize, value: f64, entry: &str) {
        // JSON has no infinity: a singular matrix is reported as the largest finite number
        let value = value.clamp(-f64::MAX, f64::MAX);
        let worse = |a: f64, b: f64| if self.larger_worse { a > b } else { a < b };
        match &mut self.hit[k] {
            Some((w, e)) => {
                if worse(value, *w) {
                    *w = value;
                }
                if !e.iter().any(|x| x == entry) {
                    e.push(entry.to_string());
                }
            }
            None => self.hit[k] = Some((value, vec![entry.to_string()])),
        }
    }
    fn count(&self) -> usize {
        self.hit.iter().filter(|h| h.is_some()).count()
    }
    fn band_of(&self, f: f64) -> Option<usize> {
        self.bands.iter().position(|b| b.contains(f))
    }
    fn ranges(&self) -> Vec<FlaggedRange> {
        // (band of the last line, last flagged line, range)
        let mut out: Vec<(Option<usize>, usize, FlaggedRange)> = Vec::new();
        let larger = self.larger_worse;
        for (k, h) in self.hit.iter().enumerate() {
            let Some((v, entries)) = h else { continue };
            let f = self.freqs[k];
            let bi = if f > 0.0 { self.band_of(f) } else { None };
            let (lower, upper, label) = match bi {
                Some(i) => (
                    self.bands[i].lower,
                    self.bands[i].upper,
                    self.bands[i].label.clone(),
                ),
                None => (0.0, 0.0, "0".to_string()),
            };
            // merge with the previous range when no unflagged line lies
            // between, or when the bands touch
            let merge = match out.last() {
                Some((_, pk, _)) if pk + 1 == k => true,
                Some((Some(pb), _, _)) => bi.is_some_and(|i| i == *pb || i == pb + 1),
                Some((None, _, _)) => bi.is_none(),
                None => false,
            };
            if merge {
                let Some((pb, pk, r)) = out.last_mut() else {
                    continue;
                };
                *pb = bi;
                *pk = k;
                r.upper = upper;
                r.last_band = label;
                r.lines += 1;
                if (larger && *v > r.worst) || (!larger && *v < r.worst) {
                    r.worst = *v;
                    r.worst_at = f;
                }
                for e in entries {
                    if r.entries.len() < 8 && !r.entries.contains(e) {
                        r.entries.push(e.clone());
                    }
                }
            } else {
                out.push((
                    bi,
                    k,
                    FlaggedRange {
                        lower,
                        upper,
                        first_band: label.clone(),
                        last_band: label,
                        lines: 1,
                        worst: *v,
                        worst_at: f,
                        entries: entries.iter().take(8).cloned().collect(),
                    },
                ));
            }
        }
        out.into_iter().map(|(_, _, r)| r).collect()
    }
}

fn positive(set: &FrfSet, k: usize, i: usize, j: usize) -> Complex64 {
    set.get(k, i, j) * set.outputs[i].sign() * set.inputs[j].sign()
}

fn pair_label(a: &Dof, b: &Dof) -> String {
    format!("{} / {}", a.unsigned(), b.unsigned())
}

fn worst_text(r: &[FlaggedRange], larger: bool) -> Option<&FlaggedRange> {
    r.iter().reduce(|a, b| {
        if (larger && b.worst > a.worst) || (!larger && b.worst < a.worst) {
            b
        } else {
            a
        }
    })
}

/// Reciprocity of the pairs present both ways.
pub fn check_reciprocity(set: &FrfSet, opts: &AuditOptions) -> CheckResult {
    let mut pairs = Vec::new();
    for a in 0..set.n_out() {
        for b in 0..set.n_in() {
            if set.outputs[a].same_place(&set.inputs[b]) || !set.is_present(a, b) {
                continue;
            }
            // the transposed entry: output at inputs[b], input at outputs[a]
            let Some(a2) = set.out_place(&set.inputs[b]) else {
                continue;
            };
            let Some(b2) = set.in_place(&set.outputs[a]) else {
                continue;
            };
            if !set.is_present(a2, b2) {
                continue;
            }
            let key = (set.outputs[a].unsigned(), set.inputs[b].unsigned());
            let rev = (key.1.clone(), key.0.clone());
            if pairs.iter().any(|(p, _, _)| *p == rev) {
                continue;
            }
            pairs.push((key, (a, b), (a2, b2)));
        }
    }
    let reciprocal_kind = set.signal.is_none()
        && ((set.out_qty.is_motion() && set.in_qty == Quantity::Force)
            || (set.out_qty == Quantity::Force && set.in_qty.is_motion()));
    if pairs.is_empty() || !reciprocal_kind {
        return CheckResult {
            check: "reciprocity".into(),
            status: Status::NotApplicable,
            flagged: Vec::new(),
            summary: if !reciprocal_kind {
                format!(
                    "{} data: reciprocity between outputs and inputs of different kinds is not checked",
                    set.kind()
                )
            } else {
                "no DOF pair is present both ways (H_ij and H_ji)".into()
            },
            details: Vec::new(),
        };
    }
    let mut flags = Flags::new(&set.freqs, opts.band_fraction, true);
    let mut bad_pairs = 0;
    let mut worst_all: f64 = 0.0;
    for ((da, db), (a, b), (a2, b2)) in &pairs {
        let mut bad = false;
        for k in 0..set.n_lines() {
            let h1 = positive(set, k, *a, *b);
            let h2 = positive(set, k, *a2, *b2);
            let m = h1.norm().max(h2.norm());
            if m == 0.0 {
                continue;
            }
            let d = (h1 - h2).norm() / m;
            worst_all = worst_all.max(d);
            if d > opts.reciprocity_tol {
                flags.add(k, d, &pair_label(da, db));
                bad = true;
            }
        }
        if bad {
            bad_pairs += 1;
        }
    }
    let ranges = flags.ranges();
    let summary = if bad_pairs == 0 {
        format!(
            "{} pair(s) compared; largest relative difference {:.1} % (limit {:.0} %, common practice)",
            pairs.len(),
            100.0 * worst_all,
            100.0 * opts.reciprocity_tol
        )
    } else {
        let w = worst_text(&ranges, true);
        format!(
            "{bad_pairs} of {} pair(s) differ by more than {:.0} % at {} line(s); worst {:.0} % at {:.4} Hz ({})",
            pairs.len(),
            100.0 * opts.reciprocity_tol,
            flags.count(),
            100.0 * w.map(|r| r.worst).unwrap_or(f64::NAN),
            w.map(|r| r.worst_at).unwrap_or(f64::NAN),
            w.and_then(|r| r.entries.first().cloned()).unwrap_or_default()
        )
    };
    CheckResult {
        check: "reciprocity".into(),
        status: if bad_pairs == 0 {
            Status::Pass
        } else {
            Status::Flag
        },
        flagged: ranges,
        summary,
        details: Vec::new(),
    }
}

/// Passivity of the driving points.
pub fn check_passivity(set: &FrfSet, opts: &AuditOptions) -> CheckResult {
    let na = |why: String| CheckResult {
        check: "passivity".into(),
        status: Status::NotApplicable,
        flagged: Vec::new(),
        summary: why,
        details: Vec::new(),
    };
    if set.signal.is_some() {
        return na("a spectrum, not an FRF set".into());
    }
    // only the outputs and inputs at a driving point are converted (the same
    // values; the whole set's converted copy was 80 MB for a 58b file of
    // 500 × 2 FRFs on 5,000 lines, and the page's slowest step after the hash)
    let mut cols: Vec<usize> = Vec::new();
    let mut rows: Vec<usize> = Vec::new();
    for (i, d) in set.outputs.iter().enumerate() {
        if let Some(j) = set.in_place(d) {
            rows.push(i);
            if !cols.contains(&j) {
                cols.push(j);
            }
        }
    }
    cols.sort_unstable();
    let at = set.select(&rows, &cols);
    let conv = if set.out_qty.is_motion() && set.in_qty == Quantity::Force {
        at.to_quantities(Quantity::Velocity, Quantity::Force)
    } else if set.out_qty == Quantity::Force && set.in_qty.is_motion() {
        at.to_quantities(Quantity::Force, Quantity::Velocity)
    } else {
        return na(format!(
            "{} data have no driving-point mobility or impedance",
            set.kind()
        ));
    };
    let Ok(y) = conv else {
        return na("the quantities could not be converted to mobility".into());
    };
    let what = if y.out_qty == Quantity::Velocity {
        "mobility"
    } else {
        "impedance"
    };
    let mut dps = Vec::new();
    for i in 0..y.n_out() {
        if let Some(j) = y.in_place(&y.outputs[i]) {
            if y.is_present(i, j) {
                dps.push((i, j));
            }
        }
    }
    if dps.is_empty() {
        return na("no driving point (output and input at the same DOF) is present".into());
    }
    let mut flags = Flags::new(&y.freqs, opts.band_fraction, false);
    let mut bad = 0;
    for &(i, j) in &dps {
        let mut any = false;
        for k in 0..y.n_lines() {
            let v = positive(&y, k, i, j);
            let n = v.norm();
            if n > 0.0 && v.re < -opts.passivity_rel_tol * n {
                // measure: Re / |Y| (−1 … 0), the cosine of the phase
                flags.add(k, v.re / n, &y.outputs[i].unsigned().to_string());
                any = true;
            }
        }
        if any {
            bad += 1;
        }
    }
    let ranges = flags.ranges();
    let summary = if bad == 0 {
        format!(
            "{} driving point(s): Re({what}) ≥ 0 at every line (e^{{+iωt}})",
            dps.len()
        )
    } else {
        let w = worst_text(&ranges, false);
        format!(
            "{bad} of {} driving point(s) have Re({what}) < 0 at {} line(s); worst Re/|{}| = {:.2} at {:.4} Hz ({})",
            dps.len(),
            flags.count(),
            if what == "mobility" { "Y" } else { "Z" },
            w.map(|r| r.worst).unwrap_or(f64::NAN),
            w.map(|r| r.worst_at).unwrap_or(f64::NAN),
            w.and_then(|r| r.entries.first().cloned()).unwrap_or_default()
        )
    };
    CheckResult {
        check: "passivity".into(),
        status: if bad == 0 { Status::Pass } else { Status::Flag },
        flagged: ranges,
        summary,
        details: Vec::new(),
    }
}

/// Coherence where supplied.
pub fn check_coherence(set: &FrfSet, opts: &AuditOptions) -> CheckResult {
    let Some(coh) = &set.coherence else {
        return CheckResult {
            check: "coherence".into(),
            status: Status::NotApplicable,
            flagged: Vec::new(),
            summary: "no coherence supplied".into(),
            details: Vec::new(),
        };
    };
    let mut flags = Flags::new(&set.freqs, opts.band_fraction, false);
    let mut supplied = 0usize;
    let mut lowest = f64::INFINITY;
    let mut bad_entries = 0;
    for i in 0..set.n_out() {
        for j in 0..set.n_in() {
            if !set.is_present(i, j) {
                continue;
            }
            let mut has = false;
            let mut bad = false;
            for k in 0..set.n_lines() {
                let c = coh[set.idx(k, i, j)];
                if c.is_nan() {
                    continue;
                }
                has = true;
                lowest = lowest.min(c);
                if c < opts.coherence_min {
                    flags.add(k, c, &pair_label(&set.outputs[i], &set.inputs[j]));
                    bad = true;
                }
            }
            supplied += has as usize;
            bad_entries += bad as usize;
        }
    }
    if supplied == 0 {
        return CheckResult {
            check: "coherence".into(),
            status: Status::NotApplicable,
            flagged: Vec::new(),
            summary: "no coherence supplied".into(),
            details: Vec::new(),
        };
    }
    let ranges = flags.ranges();
    CheckResult {
        check: "coherence".into(),
        status: if bad_entries == 0 {
            Status::Pass
        } else {
            Status::Flag
        },
        summary: if bad_entries == 0 {
            format!(
                "{supplied} entr(ies) with coherence; lowest {lowest:.3} (limit {}, common practice)",
                opts.coherence_min
            )
        } else {
            format!(
                "{bad_entries} of {supplied} entr(ies) below {} at {} line(s); lowest {lowest:.3}",
                opts.coherence_min,
                flags.count()
            )
        },
        flagged: ranges,
        details: Vec::new(),
    }
}

/// Condition number of a square matrix with outputs = inputs, per line.
pub fn check_conditioning(set: &FrfSet, opts: &AuditOptions) -> CheckResult {
    let square = set.signal.is_none()
        && set.n_out() == set.n_in()
        && set.n_out() > 1
        && set.is_complete()
        && set
            .outputs
            .iter()
            .zip(&set.inputs)
            .all(|(a, b)| a.same_place(b));
    if !square {
        return CheckResult {
            check: "conditioning".into(),
            status: Status::NotApplicable,
            flagged: Vec::new(),
            summary: "not a complete square matrix with outputs and inputs at the same DOFs".into(),
            details: Vec::new(),
        };
    }
    let cond = condition_numbers(set);
    let mut flags = Flags::new(&set.freqs, opts.band_fraction, true);
    for (k, &c) in cond.iter().enumerate() {
        if c > opts.condition_max || !c.is_finite() {
            flags.add(k, c, "matrix");
        }
    }
    let worst = cond.iter().copied().fold(0.0, f64::max);
    let n = flags.count();
    CheckResult {
        check: "conditioning".into(),
        status: if n == 0 { Status::Pass } else { Status::Flag },
        flagged: flags.ranges(),
        summary: format!(
            "largest 2-norm condition number {:.3e}{} (limit {:.0e}, common practice)",
            worst,
            if n > 0 {
                format!(", above the limit at {n} line(s)")
            } else {
                String::new()
            },
            opts.condition_max
        ),
        details: Vec::new(),
    }
}

/// 2-norm condition number s_max / s_min of each line's matrix (∞ when
/// singular), from the singular values of [`crate::linalg::svd`] (one-sided
/// Jacobi); NaN, which the conditioning check flags, where a line has
/// non-finite entries or its SVD did not converge.
pub fn condition_numbers(set: &FrfSet) -> Vec<f64> {
    (0..set.n_lines())
        .map(|k| {
            crate::linalg::svd::condition_number(set.line(k), set.n_out(), set.n_in())
                .unwrap_or(f64::NAN)
        })
        .collect()
}

/// Grid checks: uneven spacing, under-resolved resonance peaks.
pub fn check_grid(set: &FrfSet, opts: &AuditOptions) -> CheckResult {
    let f = &set.freqs;
    let mut details = Vec::new();
    let mut flagged = Vec::new();
    let mut notes = Vec::new();
    if f.len() >= 3 {
        let d: Vec<f64> = f.windows(2).map(|w| w[1] - w[0]).collect();
        let (mn, mx) = d
            .iter()
            .fold((f64::INFINITY, 0.0f64), |(a, b), &x| (a.min(x), b.max(x)));
        if mx - mn > 1e-6 * mx {
            notes.push(format!("uneven grid: spacing from {mn:.4} to {mx:.4} Hz"));
        }
    }
    // resonance peaks in driving points (or every entry when there is none)
    let mut entries: Vec<(usize, usize)> = Vec::new();
    for i in 0..set.n_out() {
        for j in 0..set.n_in() {
            if set.is_present(i, j) && set.outputs[i].same_place(&set.inputs[j]) {
                entries.push((i, j));
            }
        }
    }
    if entries.is_empty() {
        for i in 0..set.n_out() {
            for j in 0..set.n_in() {
                if set.is_present(i, j) {
                    entries.push((i, j));
                }
            }
        }
    }
    let mut flags = Flags::new(f, opts.band_fraction, false);
    let mut thin = 0;
    if set.signal.is_none() {
        for &(i, j) in &entries {
            let m: Vec<f64> = (0..set.n_lines())
                .map(|k| set.get(k, i, j).norm())
                .collect();
            for k in 1..m.len().saturating_sub(1) {
                if m[k] > m[k - 1] && m[k] > m[k + 1] {
                    let half = m[k] / std::f64::consts::SQRT_2;
                    let mut n = 1;
                    let mut a = k;
                    while a > 0 && m[a - 1] >= half {
                        a -= 1;
                        n += 1;
                    }
                    let mut b = k;
                    while b + 1 < m.len() && m[b + 1] >= half {
                        b += 1;
                        n += 1;
                    }
                    // a peak that never falls to half power within the data is not a resonance we can judge
                    if a == 0 || b + 1 == m.len() {
                        continue;
                    }
                    if n < opts.min_lines_per_peak {
                        thin += 1;
                        flags.add(k, n as f64, &pair_label(&set.outputs[i], &set.inputs[j]));
                    }
                }
            }
        }
    }
    if thin > 0 {
        notes.push(format!(
            "{thin} resonance peak(s) have fewer than {} lines above half power: the resolution is too coarse for the damping, peak levels and damping are underestimated",
            opts.min_lines_per_peak
        ));
        flagged = flags.ranges();
    }
    let status = if notes.is_empty() {
        Status::Pass
    } else {
        Status::Flag
    };
    let summary = if notes.is_empty() {
        format!(
            "{} lines, {} to {} Hz, even spacing; peaks resolved",
            f.len(),
            f.first().copied().unwrap_or(f64::NAN),
            f.last().copied().unwrap_or(f64::NAN)
        )
    } else {
        notes.join("; ")
    };
    details.extend(notes);
    CheckResult {
        check: "grid".into(),
        status,
        flagged,
        summary,
        details,
    }
}

/// Warnings made while importing, missing entries, and sides of unknown quantity.
pub fn check_import(set: &FrfSet) -> CheckResult {
    let missing = set.missing_entries();
    let mut details = set.warnings.clone();
    if set.signal.is_none()
        && (set.out_qty == Quantity::Dimensionless || set.in_qty == Quantity::Dimensionless)
    {
        details.push(format!(
            "the quantities are {} per {}: a side without a known quantity cannot be converted or checked for units",
            set.out_qty, set.in_qty
        ));
    }
    if !missing.is_empty() {
        details.push(format!("{} entries missing", missing.len()));
    }
    CheckResult {
        check: "import".into(),
        status: if details.is_empty() {
            Status::Pass
        } else {
            Status::Flag
        },
        flagged: Vec::new(),
        summary: if details.is_empty() {
            "no warnings, no missing entries".into()
        } else {
            let mut s = details[0].clone();
            if details.len() > 1 {
                s.push_str(&format!(" (+{} more)", details.len() - 1));
            }
            s
        },
        details,
    }
}

/// Homogeneity of two sets of one component measured at different
/// excitation levels. For every common entry the level difference
/// 20·log10(|H_high| / |H_low|) is taken per line; a band's homogeneity error
/// is the largest |difference| of its lines (a resonance that moves within a
/// band is caught, which a band-energy comparison would miss). Bands above
/// `opts.linearity_tol_db` are flagged.
pub fn audit_linearity(low: &FrfSet, high: &FrfSet, opts: &AuditOptions) -> Result<CheckResult> {
    if low.signal.is_some() || high.signal.is_some() {
        return Err(Error::quantity(
            "the linearity check compares two FRF sets, not spectra",
        ));
    }
    if low.out_qty != high.out_qty || low.in_qty != high.in_qty {
        return Err(Error::quantity(format!(
            "'{}' is {} and '{}' is {}; convert one to the other's kind first",
            low.name,
            low.kind(),
            high.name,
            high.kind()
        )));
    }
    crate::predict::require_same_grid(low, high)?;
    let mut flags = Flags::new(&low.freqs, opts.band_fraction, true);
    let mut compared = 0;
    let mut bad = 0;
    let mut worst: f64 = 0.0;
    for i in 0..low.n_out() {
        for j in 0..low.n_in() {
            if !low.is_present(i, j) {
                continue;
            }
            let Some(i2) = high.out_place(&low.outputs[i]) else {
                continue;
            };
            let Some(j2) = high.in_place(&low.inputs[j]) else {
                continue;
            };
            if !high.is_present(i2, j2) {
                continue;
            }
            compared += 1;
            let label = pair_label(&low.outputs[i], &low.inputs[j]);
            // level difference per line, then the largest |difference| of each band
            let d: Vec<f64> = (0..low.n_lines())
                .map(|k| 20.0 * (high.get(k, i2, j2).norm() / low.get(k, i, j).norm()).log10())
                .collect();
            let mut any = false;
            for band in &flags.bands.clone() {
                let lines: Vec<usize> = (0..low.n_lines())
                    .filter(|&k| band.contains(low.freqs[k]) && d[k].is_finite())
                    .collect();
                let Some(bw) = lines.iter().map(|&k| d[k].abs()).reduce(f64::max) else {
                    continue;
                };
                worst = worst.max(bw);
                if bw > opts.linearity_tol_db {
                    any = true;
                    for &k in &lines {
                        flags.add(k, d[k].abs(), &label);
                    }
                }
            }
            bad += any as usize;
        }
    }
    if compared == 0 {
        return Err(Error::dof(format!(
            "'{}' and '{}' have no entry in common to compare",
            low.name, high.name
        )));
    }
    let ranges = flags.ranges();
    Ok(CheckResult {
        check: "linearity".into(),
        status: if bad == 0 { Status::Pass } else { Status::Flag },
        summary: if bad == 0 {
            format!(
                "'{}' vs '{}': {compared} entr(ies), levels agree within {:.2} dB at every line (limit {} dB, common practice)",
                low.name, high.name, worst, opts.linearity_tol_db
            )
        } else {
            format!(
                "'{}' vs '{}': {bad} of {compared} entr(ies) change by more than {} dB between excitation levels; worst {:.2} dB: not homogeneous, the data are level-dependent",
                low.name, high.name, opts.linearity_tol_db, worst
            )
        },
        flagged: ranges,
        details: Vec::new(),
    })
}

/// Every single-set check of `set`.
pub fn audit(set: &FrfSet, opts: &AuditOptions) -> AuditReport {
    AuditReport {
        set: set.name.clone(),
        kind: set.kind(),
        lines: set.n_lines(),
        checks: vec![
            check_reciprocity(set, opts),
            check_passivity(set, opts),
            check_coherence(set, opts),
            check_conditioning(set, opts),
            check_grid(set, opts),
            check_import(set),
        ],
        caution: CAUTION.to_string(),
    }
}

/// [`audit`] of `set` plus the linearity check against `other` (the same
/// component at another excitation level).
pub fn audit_pair(set: &FrfSet, other: &FrfSet, opts: &AuditOptions) -> Result<AuditReport> {
    let mut r = audit(set, opts);
    r.checks.push(audit_linearity(set, other, opts)?);
    r.set = format!("{} with {}", set.name, other.name);
    Ok(r)
}
