//! Matching recovered spikes to the truth and error figures.
