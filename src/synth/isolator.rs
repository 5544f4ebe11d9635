//! Resilient isolators described by a dynamic stiffness magnitude k(f) and a
//! loss factor η(f): K(f) = k(f)(1 + iη(f)) (N/m).
//!
//! A single table point gives a constant k and η. Between table points k is
//! interpolated linearly in log k against log f and η linearly against log f;
//! outside the table the stiffness is not extrapolated (an error names the
//! range).

use super::check_value;
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::units::Quantity;
use num_complex::Complex64;

/// One point of an isolator's stiffness table.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct StiffnessPoint {
    /// Frequency (Hz).
    pub freq: f64,
    /// Dynamic stiffness magnitude of the real part k (N/m).
    pub k: f64,
    /// Loss factor η.
    #[serde(default)]
    pub eta: f64,
}

/// An isolator in one direction.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Isolator {
    /// Name of the resulting set.
    pub name: String,
    /// DOF label of the 1×1 set, e.g. `isolator:1+Z`.
    #[serde(with = "super::dof_text")]
    pub dof: Dof,
    /// Stiffness table, strictly increasing in frequency (one point = constant).
    pub table: Vec<StiffnessPoint>,
}

impl Isolator {
    /// A constant k(1 + iη).
    pub fn constant(name: &str, dof: Dof, k: f64, eta: f64) -> Isolator {
        Isolator {
            name: name.to_string(),
            dof,
            table: vec![StiffnessPoint { freq: 0.0, k, eta }],
        }
    }

    pub fn validate(&self) -> Result<()> {
        if self.table.is_empty() {
            return Err(Error::numeric(format!(
                "isolator '{}' has an empty stiffness table; expected at least one point",
                self.name
            )));
        }
        for (n, p) in self.table.iter().enumerate() {
            let f = format!("table[{n}]");
            check_value("frequency", p.freq, false).map_err(|e| e.field(f.clone()))?;
            check_value("stiffness k", p.k, true).map_err(|e| e.field(f.clone()))?;
            check_value("loss factor eta", p.eta, false).map_err(|e| e.field(f.clone()))?;
            if n > 0 && p.freq <= self.table[n - 1].freq {
                return Err(Error::grid(format!(
                    "isolator '{}': table point {} ({} Hz) does not exceed the one before ({} Hz)",
                    self.name,
                    n + 1,
                    p.freq,
                    self.table[n - 1].freq
                ))
                .field(f));
            }
        }
        if self.table.len() > 1 && self.table[0].freq <= 0.0 {
            return Err(Error::grid(format!(
                "isolator '{}': a table of several points is interpolated in log f and cannot start at 0 Hz",
                self.name
            )));
        }
        Ok(())
    }

    /// k and η at one frequency.
    pub fn k_eta(&self, f: f64) -> Result<(f64, f64)> {
        let t = &self.table;
        if t.len() == 1 {
            return Ok((t[0].k, t[0].eta));
        }
        let (lo, hi) = (t[0].freq, t[t.len() - 1].freq);
        if f < lo * (1.0 - 1e-12) || f > hi * (1.0 + 1e-12) {
            return Err(Error::grid(format!(
                "isolator '{}' is given from {lo} to {hi} Hz; {f} Hz is outside and is not extrapolated",
                self.name
            )));
        }
        let f = f.clamp(lo, hi);
        let s = t.partition_point(|p| p.freq < f).clamp(1, t.len() - 1);
        let (a, b) = (t[s - 1], t[s]);
        let x = (f.ln() - a.freq.ln()) / (b.freq.ln() - a.freq.ln());
        let k = (a.k.ln() + x * (b.k.ln() - a.k.ln())).exp();
        let eta = a.eta + x * (b.eta - a.eta);
        Ok((k, eta))
    }

    /// The 1×1 dynamic stiffness set K(f) = k(f)(1 + iη(f)), usable as a
    /// measured joint.
    pub fn stiffness(&self, freqs: &[f64]) -> Result<FrfSet> {
        self.validate()?;
        crate::grid::check_grid(freqs)?;
        let mut s = FrfSet::zeros(
            &self.name,
            freqs.to_vec(),
            vec![self.dof.clone()],
            vec![self.dof.clone()],
            Quantity::Force,
            Quantity::Displacement,
        );
        for (l, &f) in freqs.iter().enumerate() {
            let (k, eta) = self.k_eta(f)?;
            s.set(l, 0, 0, Complex64::new(k, k * eta));
        }
        Ok(s)
    }

    /// The massless two-port between ends `a` and `b`: [[K, −K], [−K, K]].
    pub fn two_port(&self, freqs: &[f64], a: Dof, b: Dof) -> Result<FrfSet> {
        if a.same_place(&b) {
            return Err(Error::dof(format!(
                "isolator '{}': both ends are {a}; expected two different DOFs",
                self.name
            )));
        }
        let one = self.stiffness(freqs)?;
        let mut s = FrfSet::zeros(
            &self.name,
            freqs.to_vec(),
            vec![a.clone(), b.clone()],
            vec![a, b],
            Quantity::Force,
            Quantity::Displacement,
        );
        for l in 0..freqs.len() {
            let k = one.get(l, 0, 0);
            s.set(l, 0, 0, k);
            s.set(l, 1, 1, k);
            s.set(l, 0, 1, -k);
            s.set(l, 1, 0, -k);
        }
        Ok(s)
    }

    /// The same isolator with every stiffness multiplied by `factor`
    /// (a softer or stiffer variant; loss factors unchanged).
    pub fn scaled(&self, name: &str, factor: f64) -> Result<Isolator> {
        check_value("stiffness factor", factor, true)?;
        let mut i = self.clone();
        i.name = name.to_string();
        for p in &mut i.table {
            p.k *= factor;
        }
        Ok(i)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Direction;

    #[test]
    fn interpolation_and_range() {
        let iso = Isolator {
            name: "i".into(),
            dof: Dof::new("iso", "1", Direction::Z),
            table: vec![
                StiffnessPoint {
                    freq: 10.0,
                    k: 1e5,
                    eta: 0.1,
                },
                StiffnessPoint {
                    freq: 1000.0,
                    k: 4e5,
                    eta: 0.2,
                },
            ],
        };
        // geometric midpoint 100 Hz: k = √(1e5·4e5) = 2e5, η = 0.15
        let (k, eta) = iso.k_eta(100.0).unwrap();
        assert!((k - 2e5).abs() < 1e-6 && (eta - 0.15).abs() < 1e-12);
        assert!(iso.stiffness(&[5.0]).is_err());
        let s = iso.stiffness(&[10.0, 1000.0]).unwrap();
        assert_eq!(s.kind(), crate::frf::FrfKind::DynamicStiffness);
        assert!((s.get(1, 0, 0) - Complex64::new(4e5, 8e4)).norm() < 1e-6);
        let tp = iso
            .two_port(
                &[10.0],
                Dof::new("iso", "top", Direction::Z),
                Dof::new("iso", "bot", Direction::Z),
            )
            .unwrap();
        assert_eq!(tp.get(0, 0, 1), -tp.get(0, 0, 0));
        let mut bad = iso.clone();
        bad.table[1].k = -1.0;
        assert!(bad
            .stiffness(&[10.0])
            .unwrap_err()
            .field
            .unwrap()
            .contains("table[1]"));
    }
}
