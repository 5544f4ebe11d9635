//! Levels in dB (ISO 1683 references), A/C weightings (IEC 61672-1), octave bands (IEC 61260-1). (Being built.)
