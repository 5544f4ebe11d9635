//! Component synthesis: lumped networks, modal superposition, beams, isolators. (Being built.)
