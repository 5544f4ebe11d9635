//! A recording held in memory: channels of equal length at one sample rate, in SI.

use super::Channel;
use crate::error::{Error, Result};
use crate::io::uff58::TimeHistory;

#[derive(Debug, Clone, PartialEq)]
pub struct Recording {
    /// Samples per second.
    pub fs: f64,
    pub channels: Vec<Channel>,
    /// One vector per channel, all of one length, SI.
    pub samples: Vec<Vec<f64>>,
}

impl Recording {
    /// The time histories of a UFF file as one recording: every one needs a
    /// channel DOF, a quantity and an even sample rate, and all share the
    /// rate, start and length (records of other lengths are refused, not
    /// cut).
    pub fn from_time_histories(file: &str, t: &[TimeHistory]) -> Result<Recording> {
        let Some(first) = t.first() else {
            return Err(
                Error::usage("the file holds no time history (UFF 58 function type 1)")
                    .in_file(file),
            );
        };
        let mut channels = Vec::with_capacity(t.len());
        let mut samples = Vec::with_capacity(t.len());
        let fs = first.sample_rate_hz;
        for h in t {
            let place = |e: Error| e.in_file(file).at_line(h.line);
            let Some(dof) = h.channel.clone() else {
                return Err(place(Error::usage(format!(
                    "time history '{}' has no channel DOF (node 0, direction 0); it cannot be told apart",
                    crate::error::quote(&h.name)
                ))));
            };
            let Some(quantity) = h.quantity else {
                return Err(place(Error::quantity(format!(
                    "time history {dof} does not say what it measures (record 9); a spectrum would have no unit"
                ))));
            };
            let (Some(r), Some(r0)) = (h.sample_rate_hz, fs) else {
                return Err(place(Error::unsupported(format!(
                    "time history {dof} has uneven time steps; spectra need an even sample rate"
                ))));
            };
            if (r - r0).abs() > 1e-9 * r0 {
                return Err(place(Error::usage(format!(
                    "time history {dof} is sampled at {r} Hz, the first one at {r0} Hz; one recording needs one rate"
                ))));
            }
            if h.values.len() != first.values.len() || (h.start_s - first.start_s).abs() > 0.5 / r0
            {
                return Err(place(Error::usage(format!(
                    "time history {dof} has {} samples from {} s, the first one {} from {} s; channels analysed together must cover the same time",
                    h.values.len(),
                    h.start_s,
                    first.values.len(),
                    first.start_s
                ))));
            }
            if channels.iter().any(|c: &Channel| c.dof == dof) {
                return Err(place(Error::usage(format!("channel {dof} appears twice"))));
            }
            channels.push(Channel { dof, quantity });
            samples.push(h.values.clone());
        }
        let fs = fs.unwrap_or(f64::NAN);
        Ok(Recording {
            fs,
            channels,
            samples,
        })
    }

    /// Samples per channel.
    pub fn len(&self) -> usize {
        self.samples.first().map_or(0, |s| s.len())
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Index of the channel at `dof`'s place (sign ignored), naming the
    /// channels when absent.
    pub fn index_of(&self, dof: &crate::frf::Dof) -> Result<usize> {
        self.channels
            .iter()
            .position(|c| c.dof.same_place(dof))
            .ok_or_else(|| {
                let names: Vec<String> = self.channels.iter().map(|c| c.dof.to_string()).collect();
                Error::usage(format!(
                    "no channel {dof}; the recording has {}",
                    names.join(", ")
                ))
            })
    }
}
