//! Noise-level estimation from the data.
