//! Fitness audit: reciprocity, passivity, linearity, coherence, conditioning. (Being built.)
