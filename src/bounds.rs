//! Cramér–Rao bounds for positions and amplitudes of several spikes.
