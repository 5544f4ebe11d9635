//! What a loaded file holds, in words and numbers a person checks at a
//! glance: format, FRF count, DOFs, quantities and units, kind, grid,
//! SHA-256 and warnings. Shared by the page (component cards) and any other
//! face that wants an inspect summary.

use crate::frf::FrfSet;
use crate::io::Loaded;

/// How the lines of a grid are spaced.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct GridSummary {
    pub lines: usize,
    pub f_min: f64,
    pub f_max: f64,
    /// "uniform", "logarithmic", "irregular" or "single line".
    pub spacing: String,
    /// Line spacing in Hz for a uniform grid, ratio between lines for a log grid.
    pub step: Option<f64>,
}

/// One FRF set in words.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SetSummary {
    /// Identifier of the set in the caller's store (filled by the caller).
    #[serde(default)]
    pub id: String,
    pub name: String,
    pub kind: String,
    /// "peak", "rms", "autopower", "psd" for spectra; None for FRFs.
    pub signal: Option<String>,
    pub out_qty: String,
    pub in_qty: String,
    /// SI unit of the outputs and inputs (translational DOFs).
    pub out_unit: String,
    pub in_unit: String,
    pub outputs: Vec<String>,
    pub inputs: Vec<String>,
    /// Entries present (FRF count).
    pub frfs: usize,
    /// Entries absent from the matrix.
    pub missing: usize,
    /// The absent entries, "OUT / IN".
    #[serde(default)]
    pub missing_entries: Vec<String>,
    /// SI unit of the values, e.g. "(m/s²)/N", with rotational DOFs' units
    /// listed too ("m/N, rad/N").
    #[serde(default)]
    pub unit: String,
    pub coherence: bool,
    pub grid: GridSummary,
    pub warnings: Vec<String>,
    /// The fitness audit with default (common-practice) limits, for sets read
    /// from files ([`file_summary`]); None for spectra and results.
    #[serde(default)]
    pub audit: Option<crate::audit::AuditReport>,
}

/// One file in words.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FileSummary {
    pub file: String,
    pub bytes: usize,
    pub sha256: String,
    pub format: String,
    /// FRFs in all sets together.
    pub frfs: usize,
    pub sets: Vec<SetSummary>,
    /// Time histories (UFF function type 1), listed apart from the sets.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub time_histories: Vec<TimeSummary>,
    pub warnings: Vec<String>,
    /// A UFF file's header (151), units (164), geometry (counts, bounding
    /// box and the node table) and modes (55), when it holds any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub uff: Option<crate::io::uff58::UffExtrasSummary>,
    /// A three-view sketch of the file's geometry with an arrow for each
    /// translational DOF its sets use (`plot::geometry_svg`), when it has nodes.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub geometry_svg: Option<String>,
    /// A geometry file of our layout (`# mortise-geometry 1`): its rows and
    /// unit ([`geometry_file_summary`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub geometry: Option<GeometryFileSummary>,
    /// Time data held as a recording (a WAV file, a time CSV, a UFF file's
    /// time histories; `workspace::time`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recording: Option<RecordingSummary>,
}

/// One channel of a recording, for the page's card.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RecordingChannel {
    pub dof: String,
    pub quantity: String,
    /// The SI unit of its samples.
    pub unit: String,
    /// The smallest and largest sample, SI.
    pub min: f64,
    pub max: f64,
}

/// A recording in words: what the card shows.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RecordingSummary {
    pub file: String,
    /// "wav", "time-csv" or the UFF format's name.
    pub format: String,
    pub sha256: String,
    pub sample_rate_hz: f64,
    pub samples: usize,
    pub duration_s: f64,
    pub channels: Vec<RecordingChannel>,
    /// Bytes held: the samples (8 a sample) and, for a WAV file or a time
    /// CSV, the file's own bytes (kept for recipes and bundles).
    pub held_bytes: u64,
    /// How the file was read (channels left out, the WAV's layout).
    pub notes: Vec<String>,
}

/// A geometry file in words: how many rows locate channels or impacts, in
/// which length unit.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct GeometryFileSummary {
    pub rows: usize,
    pub unit: String,
    /// Rows locating a node (every DOF at it) and rows locating one DOF.
    pub node_rows: usize,
    pub dof_rows: usize,
}

/// The summary of a geometry file of our layout (read by
/// [`crate::vpt::Geometry::from_csv`]): no FRFs, its rows and unit.
pub fn geometry_file_summary(file: &str, bytes: &[u8], geom: &crate::vpt::Geometry) -> FileSummary {
    let node_rows = geom
        .rows
        .iter()
        .filter(|r| matches!(r.target, crate::vpt::geometry::Target::Node { .. }))
        .count();
    FileSummary {
        file: file.to_string(),
        bytes: bytes.len(),
        sha256: crate::io::sha256_hex(bytes),
        format: "mortise-geometry".to_string(),
        frfs: 0,
        sets: Vec::new(),
        time_histories: Vec::new(),
        warnings: Vec::new(),
        uff: None,
        geometry_svg: None,
        recording: None,
        geometry: Some(GeometryFileSummary {
            rows: geom.rows.len(),
            unit: geom.unit.clone(),
            node_rows,
            dof_rows: geom.rows.len() - node_rows,
        }),
    }
}

/// One time history of a file, for `inspect` and the page's card: it is
/// not an FRF or spectrum and no operation takes it yet.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TimeSummary {
    pub name: String,
    /// The channel DOF ("" when the file gives none).
    pub channel: String,
    /// What it measures ("" when the file does not tell).
    pub quantity: String,
    /// SI unit of the values ("" when the quantity is not told).
    pub unit: String,
    pub samples: usize,
    /// Samples per second; `None` for uneven time steps.
    pub sample_rate_hz: Option<f64>,
    pub duration_s: f64,
    /// 1-based line of the dataset.
    pub line: usize,
}

/// The summary of one time history.
pub fn time_summary(t: &crate::io::uff58::TimeHistory) -> TimeSummary {
    TimeSummary {
        name: t.name.clone(),
        channel: t.channel.as_ref().map_or(String::new(), |d| d.to_string()),
        quantity: t.quantity.map_or(String::new(), |q| q.name().to_string()),
        unit: t.unit.clone(),
        samples: t.values.len(),
        sample_rate_hz: t.sample_rate_hz,
        duration_s: t.duration_s,
        line: t.line,
    }
}

impl TimeSummary {
    /// One line of text, as `inspect` prints it.
    pub fn text(&self) -> String {
        format!(
            "time history '{}' at line {}: channel {}, {}{}, {} samples{}, {:.6} s; not an FRF or spectrum (spectra and FRFs come from it through 'mortise spectrum' and 'mortise estimate', or the recipe steps 'spectrum' and 'estimate-frf')",
            self.name,
            self.line,
            if self.channel.is_empty() { "without DOF number" } else { &self.channel },
            if self.quantity.is_empty() { "quantity not told" } else { &self.quantity },
            if self.unit.is_empty() { String::new() } else { format!(" in {}", self.unit) },
            self.samples,
            self.sample_rate_hz
                .map_or(", uneven time steps".to_string(), |r| format!(" at {r:.4} Hz")),
            self.duration_s
        )
    }
}

/// Describe the spacing of a frequency grid.
pub fn grid(freqs: &[f64]) -> GridSummary {
    let n = freqs.len();
    let (f_min, f_max) = match (freqs.first(), freqs.last()) {
        (Some(a), Some(b)) => (*a, *b),
        _ => (f64::NAN, f64::NAN),
    };
    let mut g = GridSummary {
        lines: n,
        f_min,
        f_max,
        spacing: "single line".into(),
        step: None,
    };
    if n < 2 {
        return g;
    }
    let d0 = freqs[1] - freqs[0];
    // Relative tolerance 1e-6 covers spacings printed with 7 significant digits.
    let uniform = freqs
        .windows(2)
        .all(|w| ((w[1] - w[0]) - d0).abs() <= 1e-6 * d0.abs().max(f64::MIN_POSITIVE));
    if uniform {
        g.spacing = "uniform".into();
        g.step = Some((f_max - f_min) / (n - 1) as f64);
        return g;
    }
    if f_min > 0.0 {
        let r0 = freqs[1] / freqs[0];
        if freqs
            .windows(2)
            .all(|w| (w[1] / w[0] - r0).abs() <= 1e-6 * r0)
        {
            g.spacing = "logarithmic".into();
            g.step = Some((f_max / f_min).powf(1.0 / (n - 1) as f64));
            return g;
        }
    }
    g.spacing = "irregular".into();
    g
}

/// Summary of one set.
pub fn set_summary(set: &FrfSet) -> SetSummary {
    let frfs = set.present.iter().filter(|p| **p).count();
    SetSummary {
        id: String::new(),
        name: set.name.clone(),
        kind: set.kind().name().to_string(),
        signal: set.signal.map(|s| s.name().to_string()),
        out_qty: set.out_qty.name().to_string(),
        in_qty: set.in_qty.name().to_string(),
        out_unit: set.out_qty.si_unit(false).to_string(),
        in_unit: set.in_qty.si_unit(false).to_string(),
        outputs: set.outputs.iter().map(|d| d.to_string()).collect(),
        inputs: set.inputs.iter().map(|d| d.to_string()).collect(),
        frfs,
        missing: set.present.len() - frfs,
        missing_entries: set.missing_entries(),
        unit: unit_text(set),
        coherence: set.coherence.is_some(),
        grid: grid(&set.freqs),
        warnings: set.warnings.clone(),
        audit: None,
    }
}

/// The SI unit text of a set's values, for every combination of
/// translational and rotational DOFs it holds.
pub fn unit_text(s: &FrfSet) -> String {
    let rot_out = s.outputs.iter().any(|d| d.dir.is_rotational());
    let rot_in = s.inputs.iter().any(|d| d.dir.is_rotational());
    let tr_out = s.outputs.iter().any(|d| !d.dir.is_rotational());
    let tr_in = s.inputs.iter().any(|d| !d.dir.is_rotational());
    let mut v = Vec::new();
    for (ro, ri) in [(false, false), (false, true), (true, false), (true, true)] {
        let has_o = if ro { rot_out } else { tr_out };
        let has_i = if ri { rot_in } else { tr_in };
        if has_o && has_i {
            let u = if let Some(k) = s.signal {
                k.unit(s.out_qty.si_unit(ro), s.in_qty.si_unit(ri))
            } else {
                let paren = |u: &str| {
                    if u.contains(['/', '*']) {
                        format!("({u})")
                    } else {
                        u.to_string()
                    }
                };
                format!(
                    "{}/{}",
                    paren(s.out_qty.si_unit(ro)),
                    paren(s.in_qty.si_unit(ri))
                )
            };
            if !v.contains(&u) {
                v.push(u);
            }
        }
    }
    v.join(", ")
}

/// Summary of a loaded file.
pub fn file_summary(file: &str, bytes: &[u8], loaded: &Loaded) -> FileSummary {
    // supplier data get the fitness audit (default, common-practice limits); results do not
    let sets: Vec<SetSummary> = loaded
        .sets
        .iter()
        .map(|set| SetSummary {
            audit: set
                .signal
                .is_none()
                .then(|| crate::audit::audit(set, &crate::audit::AuditOptions::default())),
            ..set_summary(set)
        })
        .collect();
    FileSummary {
        file: file.to_string(),
        bytes: bytes.len(),
        sha256: loaded.sha256.clone(),
        format: loaded.format.name().to_string(),
        frfs: sets.iter().map(|s| s.frfs).sum(),
        sets,
        time_histories: loaded.time_histories.iter().map(time_summary).collect(),
        warnings: loaded.warnings.clone(),
        uff: loaded.uff.as_ref().map(|x| x.summary()),
        geometry_svg: loaded
            .uff
            .as_ref()
            .and_then(|x| x.geometry.as_ref())
            .and_then(|g| {
                let dofs: Vec<_> = loaded
                    .sets
                    .iter()
                    .flat_map(|s| s.outputs.iter().chain(s.inputs.iter()).cloned())
                    .collect();
                crate::plot::geometry_svg(g, &dofs)
            }),
        geometry: None,
        recording: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Direction, Dof};
    use crate::units::Quantity;

    #[test]
    fn grids_are_named() {
        let u: Vec<f64> = (0..11).map(|i| 10.0 + 2.5 * i as f64).collect();
        let g = grid(&u);
        assert_eq!(g.spacing, "uniform");
        assert!((g.step.unwrap() - 2.5).abs() < 1e-12);
        // Third-octave band centres (base-10 series, IEC 61260-1): ratio 10^0.1.
        let l: Vec<f64> = (0..10)
            .map(|i| 100.0 * 10f64.powf(0.1 * i as f64))
            .collect();
        let g = grid(&l);
        assert_eq!(g.spacing, "logarithmic");
        assert!((g.step.unwrap() - 10f64.powf(0.1)).abs() < 1e-9);
        assert_eq!(grid(&[1.0, 2.0, 4.5]).spacing, "irregular");
        assert_eq!(grid(&[5.0]).spacing, "single line");
    }

    #[test]
    fn set_summary_counts_and_labels() {
        let a = Dof::new("wall", "A1", Direction::Z);
        let b = Dof::new("wall", "A2", Direction::Z);
        let mut s = FrfSet::zeros(
            "wall",
            vec![10.0, 20.0],
            vec![a.clone(), b.clone()],
            vec![a, b],
            Quantity::Velocity,
            Quantity::Force,
        );
        s.present[1] = false;
        let m = set_summary(&s);
        assert_eq!(m.kind, "mobility");
        assert_eq!((m.frfs, m.missing), (3, 1));
        assert_eq!(m.outputs[1], "wall:A2+Z");
        assert_eq!(m.out_unit, "m/s");
    }
}
