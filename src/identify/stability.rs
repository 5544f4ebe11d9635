//! Stabilization over model orders and the choice of the poles.
//!
//! A pole at order p is compared with the nearest pole (in frequency) at
//! order p − 1: stable in frequency when the relative change is within
//! `tolerances.freq`, in damping within `tolerances.damping` (relative),
//! in vector when the MAC of the participation vectors is at least
//! `tolerances.mac` (multi-reference fits only). The defaults (1 %, 5 %,
//! 0.98, 5 orders) are common practice.
//!
//! Automatic choice: the poles stable in all three are grouped by
//! frequency (a group holds poles within `tolerances.freq` of its running
//! mean); a group stable at `tolerances.orders` orders or more is a mode,
//! represented by its pole at the highest order. Every group, chosen or
//! not, is reported with its orders and spread.

use super::lscf::{freq_zeta, pole_of, OrderPoles};
use super::quality::mac;
use crate::error::{Error, Result};
use num_complex::Complex64;
use serde::{Deserialize, Serialize};

/// The stability tolerances (defaults: common practice).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Tolerances {
    /// Relative frequency change between orders (default 0.01).
    #[serde(default = "d_freq")]
    pub freq: f64,
    /// Relative damping change between orders (default 0.05).
    #[serde(default = "d_damp")]
    pub damping: f64,
    /// Smallest MAC of the participation vectors (default 0.98).
    #[serde(default = "d_mac")]
    pub mac: f64,
    /// Fewest orders at which a pole must be stable to be chosen
    /// automatically (default 5).
    #[serde(default = "d_orders")]
    pub orders: usize,
}

fn d_freq() -> f64 {
    0.01
}
fn d_damp() -> f64 {
    0.05
}
fn d_mac() -> f64 {
    0.98
}
fn d_orders() -> usize {
    5
}

impl Default for Tolerances {
    fn default() -> Self {
        Tolerances {
            freq: d_freq(),
            damping: d_damp(),
            mac: d_mac(),
            orders: d_orders(),
        }
    }
}

impl Tolerances {
    pub fn check(&self) -> Result<()> {
        let bad = |f: &str, v: f64, want: &str| {
            Error::recipe(format!("tolerance '{f}' is {v}; expected {want}"))
                .field(format!("tolerances.{f}"))
        };
        if !(self.freq.is_finite() && self.freq > 0.0 && self.freq < 0.5) {
            return Err(bad(
                "freq",
                self.freq,
                "a relative change above 0 and below 0.5",
            ));
        }
        if !(self.damping.is_finite() && self.damping > 0.0 && self.damping < 10.0) {
            return Err(bad(
                "damping",
                self.damping,
                "a relative change above 0 and below 10",
            ));
        }
        if !(self.mac.is_finite() && self.mac > 0.0 && self.mac <= 1.0) {
            return Err(bad("mac", self.mac, "a MAC above 0 and at most 1"));
        }
        if self.orders < 2 {
            return Err(bad("orders", self.orders as f64, "at least 2 orders"));
        }
        Ok(())
    }
}

/// One pole of the stabilization chart.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChartPole {
    /// Undamped natural frequency, Hz.
    pub freq: f64,
    pub zeta: f64,
    pub stable_freq: bool,
    pub stable_damping: bool,
    /// `None` with a single reference (no vector to compare).
    pub stable_vector: Option<bool>,
    /// MAC with the matched pole of the previous order.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mac_previous: Option<f64>,
    /// Chosen as a mode (this very pole).
    #[serde(default)]
    pub picked: bool,
    /// The participation vector (not serialized: the chart needs none).
    #[serde(skip)]
    pub participation: Vec<Complex64>,
}

impl ChartPole {
    /// Stable in every criterion that applies.
    pub fn stable(&self) -> bool {
        self.stable_freq && self.stable_damping && self.stable_vector.unwrap_or(true)
    }
    pub fn pole(&self) -> Complex64 {
        pole_of(self.freq, self.zeta)
    }
}

/// One order of the chart.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChartOrder {
    pub order: usize,
    pub poles: Vec<ChartPole>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// The poles of every order in the band with 0 < ζ < 1, classified.
pub fn classify(
    orders: &[OrderPoles],
    band: [f64; 2],
    tol: &Tolerances,
    n_ref: usize,
) -> Vec<ChartOrder> {
    let mut out: Vec<ChartOrder> = Vec::with_capacity(orders.len());
    for op in orders {
        let mut poles = Vec::new();
        for p in &op.poles {
            let (f, z) = freq_zeta(p.s);
            if !(f >= band[0] && f <= band[1] && z > 0.0 && z < 1.0) {
                continue;
            }
            let prev = out.last().and_then(|o| {
                o.poles
                    .iter()
                    .min_by(|a, b| (a.freq - f).abs().total_cmp(&(b.freq - f).abs()))
            });
            let (sf, sd, sv, m) = match prev {
                Some(q) => {
                    let sf = (f - q.freq).abs() <= tol.freq * q.freq;
                    let sd = (z - q.zeta).abs() <= tol.damping * q.zeta;
                    let (sv, m) = if n_ref > 1 {
                        let m = mac(&p.participation, &q.participation);
                        (Some(m >= tol.mac), Some(m))
                    } else {
                        (None, None)
                    };
                    (sf, sd, sv, m)
                }
                None => (false, false, (n_ref > 1).then_some(false), None),
            };
            poles.push(ChartPole {
                freq: f,
                zeta: z,
                stable_freq: sf,
                stable_damping: sd,
                stable_vector: sv,
                mac_previous: m,
                picked: false,
                participation: p.participation.clone(),
            });
        }
        out.push(ChartOrder {
            order: op.order,
            poles,
            note: op.note.clone(),
        });
    }
    out
}

/// A chosen pole with the reasons.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Chosen {
    /// The pole's frequency (Hz) and damping ratio at the order it was taken from.
    pub freq: f64,
    pub zeta: f64,
    pub order: usize,
    /// Orders at which the group was stable.
    pub stable_orders: Vec<usize>,
    /// Relative spread (max − min)/mean of frequency and damping over those orders.
    pub freq_spread: f64,
    pub damping_spread: f64,
    pub reason: String,
}

/// A group of stable poles not chosen, with the reason.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Refused {
    pub freq: f64,
    pub stable_orders: Vec<usize>,
    pub reason: String,
}

fn spread(v: &[f64]) -> f64 {
    let lo = v.iter().cloned().fold(f64::INFINITY, f64::min);
    let hi = v.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    let mean = v.iter().sum::<f64>() / v.len().max(1) as f64;
    if mean > 0.0 {
        (hi - lo) / mean
    } else {
        0.0
    }
}

fn criteria(n_ref: usize) -> &'static str {
    if n_ref > 1 {
        "frequency, damping and vector"
    } else {
        "frequency and damping (one reference: no vector)"
    }
}

/// The poles stable in every criterion, grouped by frequency (a group
/// holds poles within `tolerances.freq` of its running mean), one pole per
/// order (the one nearest the group's median frequency): per group, order
/// index → (chart order index, pole index), groups in order of frequency.
fn stable_sets(
    chart: &[ChartOrder],
    tol: &Tolerances,
) -> Vec<std::collections::BTreeMap<usize, (usize, usize)>> {
    // (chart order index, pole index)
    let mut stable: Vec<(usize, usize)> = Vec::new();
    for (oi, o) in chart.iter().enumerate() {
        for (pi, p) in o.poles.iter().enumerate() {
            if p.stable() {
                stable.push((oi, pi));
            }
        }
    }
    stable.sort_by(|a, b| {
        chart[a.0].poles[a.1]
            .freq
            .total_cmp(&chart[b.0].poles[b.1].freq)
    });
    let mut groups: Vec<Vec<(usize, usize)>> = Vec::new();
    let mut mean = 0.0;
    for &(oi, pi) in &stable {
        let f = chart[oi].poles[pi].freq;
        match groups.last_mut() {
            Some(g) if (f - mean).abs() <= tol.freq * mean => {
                g.push((oi, pi));
                mean += (f - mean) / g.len() as f64;
            }
            _ => {
                groups.push(vec![(oi, pi)]);
                mean = f;
            }
        }
    }
    groups
        .into_iter()
        .map(|g| {
            let mut fs: Vec<f64> = g.iter().map(|&(o, p)| chart[o].poles[p].freq).collect();
            fs.sort_by(f64::total_cmp);
            let med = fs[fs.len() / 2];
            let mut per_order: std::collections::BTreeMap<usize, (usize, usize)> =
                Default::default();
            for &(o, p) in &g {
                let f = chart[o].poles[p].freq;
                let e = per_order.entry(o).or_insert((o, p));
                if (f - med).abs() < (chart[e.0].poles[e.1].freq - med).abs() {
                    *e = (o, p);
                }
            }
            per_order
        })
        .collect()
}

/// A group of stable poles (one column of the chart), for a list a reader
/// can choose from without the chart: its pole at the highest order.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StableGroup {
    /// The pole at the group's highest order: frequency (Hz), damping ratio.
    pub freq: f64,
    pub zeta: f64,
    /// That pole's model order and its index among the order's poles.
    pub order: usize,
    pub index: usize,
    /// The orders at which the group is stable in every criterion.
    pub orders: Vec<usize>,
    /// Whether a pole within the frequency tolerance of it was taken as a mode.
    pub picked: bool,
}

/// The groups of stable poles of a chart (see [`stable_sets`]), in order
/// of frequency.
pub fn stable_groups(chart: &[ChartOrder], tol: &Tolerances) -> Vec<StableGroup> {
    stable_sets(chart, tol)
        .into_iter()
        .filter_map(|per_order| {
            let &(o, p) = per_order.values().last()?;
            let pole = &chart[o].poles[p];
            let near = |f: f64| (f - pole.freq).abs() <= tol.freq * pole.freq;
            let picked = chart
                .iter()
                .flat_map(|o| &o.poles)
                .any(|q| q.picked && near(q.freq));
            Some(StableGroup {
                freq: pole.freq,
                zeta: pole.zeta,
                order: chart[o].order,
                index: p,
                orders: per_order.keys().map(|&o| chart[o].order).collect(),
                picked,
            })
        })
        .collect()
}

/// The automatic choice. Marks the chosen poles in `chart`.
pub fn auto_pick(
    chart: &mut [ChartOrder],
    tol: &Tolerances,
    n_ref: usize,
) -> (Vec<Chosen>, Vec<Refused>) {
    let mut chosen = Vec::new();
    let mut refused = Vec::new();
    for per_order in stable_sets(chart, tol) {
        let orders: Vec<usize> = per_order.keys().map(|&o| chart[o].order).collect();
        let freqs: Vec<f64> = per_order
            .values()
            .map(|&(o, p)| chart[o].poles[p].freq)
            .collect();
        let zetas: Vec<f64> = per_order
            .values()
            .map(|&(o, p)| chart[o].poles[p].zeta)
            .collect();
        let mean_f = freqs.iter().sum::<f64>() / freqs.len() as f64;
        if orders.len() < tol.orders {
            refused.push(Refused {
                freq: mean_f,
                stable_orders: orders.clone(),
                reason: format!(
                    "stable in {} at {} order(s), fewer than tolerances.orders = {}",
                    criteria(n_ref),
                    orders.len(),
                    tol.orders
                ),
            });
            continue;
        }
        let Some(&(o, p)) = per_order.values().last() else {
            continue;
        };
        let (fsp, dsp) = (spread(&freqs), spread(&zetas));
        chart[o].poles[p].picked = true;
        let pole = &chart[o].poles[p];
        chosen.push(Chosen {
            freq: pole.freq,
            zeta: pole.zeta,
            order: chart[o].order,
            stable_orders: orders.clone(),
            freq_spread: fsp,
            damping_spread: dsp,
            reason: format!(
                "stable in {} at {} orders ({}–{}); spread {:.3} % in frequency, {:.2} % in damping; taken from order {}",
                criteria(n_ref),
                orders.len(),
                orders[0],
                orders[orders.len() - 1],
                100.0 * fsp,
                100.0 * dsp,
                chart[o].order
            ),
        });
    }
    (chosen, refused)
}

/// One pole given in the recipe: a frequency and a tolerance, Hz.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PoleChoice {
    pub freq: f64,
    pub tol: f64,
}

/// The poles given in the recipe: for each, the pole within freq ± tol
/// that is stable (preferred) at the highest order, else any pole there at
/// the highest order. Marks them in `chart`; refuses a choice with no pole,
/// or two choices taking one pole.
pub fn list_pick(
    chart: &mut [ChartOrder],
    list: &[PoleChoice],
    n_ref: usize,
) -> Result<Vec<Chosen>> {
    if list.is_empty() {
        return Err(
            Error::recipe("'pick' is an empty list; give at least one pole or \"auto\"")
                .field("pick"),
        );
    }
    let mut taken: Vec<(usize, usize)> = Vec::new();
    let mut out = Vec::new();
    for (k, c) in list.iter().enumerate() {
        let place = format!("pick[{k}]");
        if !(c.freq.is_finite() && c.freq > 0.0 && c.tol.is_finite() && c.tol > 0.0) {
            return Err(Error::recipe(format!(
                "freq {} ± tol {}: expected a frequency and a tolerance above 0 Hz",
                c.freq, c.tol
            ))
            .field(place));
        }
        let mut best: Option<(bool, usize, usize, usize)> = None; // (stable, order, oi, pi)
        for (oi, o) in chart.iter().enumerate() {
            for (pi, p) in o.poles.iter().enumerate() {
                if (p.freq - c.freq).abs() > c.tol {
                    continue;
                }
                let key = (p.stable(), o.order);
                if best.map_or(true, |b| key > (b.0, b.1)) {
                    best = Some((key.0, key.1, oi, pi));
                }
            }
        }
        let Some((st, order, oi, pi)) = best else {
            return Err(Error::numeric(format!(
                "no pole within {} ± {} Hz at any order; widen 'tol' or look at the stabilization table",
                c.freq, c.tol
            ))
            .field(place));
        };
        if taken.contains(&(oi, pi)) {
            return Err(Error::recipe(format!(
                "{} ± {} Hz takes the same pole ({:.4} Hz, order {order}) as an earlier entry",
                c.freq, c.tol, chart[oi].poles[pi].freq
            ))
            .field(place));
        }
        taken.push((oi, pi));
        chart[oi].poles[pi].picked = true;
        let p = &chart[oi].poles[pi];
        out.push(Chosen {
            freq: p.freq,
            zeta: p.zeta,
            order,
            stable_orders: Vec::new(),
            freq_spread: 0.0,
            damping_spread: 0.0,
            reason: format!(
                "given in the recipe ({} ± {} Hz); the pole at order {order}, {} in {}",
                c.freq,
                c.tol,
                if st { "stable" } else { "not stable" },
                criteria(n_ref)
            ),
        });
    }
    Ok(out)
}

/// `x` to `digits` significant digits.
fn round_to(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let p = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * p).round() / p
}

/// The `pick` entry that chooses the pole at `freq`: the frequency to 5
/// significant digits, the tolerance that of stability in frequency
/// (`tolerances.freq` × freq, 3 significant digits), so the entry takes
/// the best pole of that mode's column (see [`list_pick`]).
pub fn choice_for(freq: f64, tol: &Tolerances) -> PoleChoice {
    PoleChoice {
        freq: round_to(freq, 5),
        tol: round_to(tol.freq * freq, 3),
    }
}

/// The chosen modes as `pick` entries (an automatic choice written out).
pub fn choices_of(chosen: &[Chosen], tol: &Tolerances) -> Vec<PoleChoice> {
    chosen.iter().map(|c| choice_for(c.freq, tol)).collect()
}

/// A pole clicked on the chart: the `pick` list with that pole's mode
/// removed when an entry of `current` takes it (its frequency within the
/// entry's ± tol), else added (in order of frequency). `current` `None`
/// (an automatic choice) starts from the modes it chose. Returns the list
/// and whether the pole was added. Refused: removing the last entry (an
/// empty list means no mode; automatic choice is the other way back).
pub fn toggle_pick(
    current: Option<&[PoleChoice]>,
    chosen: &[Chosen],
    freq: f64,
    tol: &Tolerances,
) -> Result<(Vec<PoleChoice>, bool)> {
    let mut list = match current {
        Some(l) => l.to_vec(),
        None => choices_of(chosen, tol),
    };
    let takes = |c: &PoleChoice| (freq - c.freq).abs() <= c.tol;
    if list.iter().any(takes) {
        list.retain(|c| !takes(c));
        if list.is_empty() {
            return Err(Error::recipe(format!(
                "the pole at {freq:.4} Hz is the only mode chosen; choose another before dropping it, or let the modes be chosen automatically"
            ))
            .field("pick"));
        }
        return Ok((list, false));
    }
    list.push(choice_for(freq, tol));
    list.sort_by(|a, b| a.freq.total_cmp(&b.freq));
    Ok((list, true))
}

#[cfg(test)]
mod pick_tests {
    use super::*;

    #[test]
    fn a_choice_rounds_and_takes_the_frequency_tolerance() {
        let t = Tolerances::default();
        let c = choice_for(118.023456, &t);
        assert_eq!(c.freq, 118.02);
        assert_eq!(c.tol, 1.18);
        assert_eq!(choice_for(42.0071, &t).freq, 42.007);
    }

    #[test]
    fn toggling_adds_in_order_and_removes_the_entry_that_takes_the_pole() {
        let t = Tolerances::default();
        let chosen = |f: f64| Chosen {
            freq: f,
            zeta: 0.01,
            order: 20,
            stable_orders: vec![],
            freq_spread: 0.0,
            damping_spread: 0.0,
            reason: String::new(),
        };
        // from an automatic choice of 42 and 165 Hz, 77 Hz is added between
        let (l, added) = toggle_pick(None, &[chosen(42.0), chosen(165.0)], 77.01, &t).unwrap();
        assert!(added);
        let fs: Vec<f64> = l.iter().map(|c| c.freq).collect();
        assert_eq!(fs, vec![42.0, 77.01, 165.0]);
        // a pole of the same column (within ±0.77 Hz) removes it again
        let (l, added) = toggle_pick(Some(&l), &[], 77.3, &t).unwrap();
        assert!(!added);
        assert_eq!(l.len(), 2);
        // the last entry cannot be removed
        let one = [choice_for(42.0, &t)];
        let e = toggle_pick(Some(&one), &[], 42.1, &t).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("pick"));
    }
}
