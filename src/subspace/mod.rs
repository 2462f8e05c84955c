//! Subspace baselines: MUSIC and root-MUSIC, ESPRIT, matrix pencil, model-order selection.
