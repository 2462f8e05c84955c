//! The plain-language cautions an estimate carries ([`Warning`]).

use super::Status;
use crate::model::PROVEN_SEPARATION_FC;
use serde::{Serialize, Serializer};
use std::fmt;

/// A plain-language caution attached to an estimate.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum Warning {
    /// Recovered lines resolved by the record (at least one resolution cell `1/N` apart) but closer
    /// than the separation [`PROVEN_SEPARATION_FC`]` = 1.26/fc` above which TV recovery is proven exact.
    BelowProvenSeparation {
        /// Minimum separation of the recovered lines, in the TV theory's unit `1/fc`.
        separation_fc: f64,
        /// The same in the record's resolution cells `1/N`.
        separation_cells: f64,
    },
    /// Recovered lines closer than the record's resolution `1/N` (one periodogram bin; `1/(NΔt)` Hz):
    /// the classical resolution limit of a record of `N` samples, about the width of the periodogram's
    /// main lobe (Stoica & Moses 2005, *Spectral Analysis of Signals*, §2.4 — section recalled from
    /// memory). The TV theory counts in `1/fc = 2/(N − 1)`, about two of these cells.
    UnderResolved {
        /// Minimum separation of the recovered lines, in the TV theory's unit `1/fc`.
        separation_fc: f64,
        /// The same in the record's resolution cells `1/N`.
        separation_cells: f64,
    },
    /// A line of a time record within one resolution cell of zero frequency: most often an offset or
    /// a trend left in the record, not a periodic component.
    NearZeroFrequency {
        /// The line's frequency in the record's unit.
        frequency: f64,
        /// Its distance from zero frequency in resolution cells `1/N`.
        cells: f64,
        /// Its amplitude modulus.
        amplitude: f64,
        /// Whether the record already has a trend fitted with the lines.
        trend_fitted: bool,
    },
    /// Two lines much closer than the record's resolution with nearly opposite phases and amplitudes
    /// far above their sum: a fitting artifact, not two physical lines (see [`crate::lines`]).
    CancellingPair {
        /// The two lines' positions in the record's unit.
        positions: (f64, f64),
        /// Their distance in resolution cells `1/N`.
        cells: f64,
        /// Their amplitude moduli.
        amplitudes: (f64, f64),
        /// The modulus of their sum.
        sum: f64,
        /// Their phase difference in degrees.
        phase_deg: f64,
    },
    /// The residual is not white: its spectral floor varies across the band (e.g. red noise rising
    /// towards low frequencies), by the whiteness rule of the noise-level estimate (`noise` module).
    NoiseNotWhite {
        /// Level of the loudest eighth of the band over the quietest.
        ratio: f64,
        /// The ratio above which the floor is called not flat at this record length.
        threshold: f64,
        /// Where the residual is loudest, in the record's unit (signed frequency, Hz with a rate).
        loudest_at: f64,
    },
    /// The dual polynomial exceeds 1 somewhere: the optimality certificate fails.
    CertificateViolated {
        /// `max |q|` over the torus.
        max_modulus: f64,
    },
    /// A local maximum of `|q|` away from the support comes close to 1: the support is ambiguous.
    WeakCertificate {
        /// The largest off-support maximum of `|q|`.
        max_off_support: f64,
    },
    /// The solver did not converge; positions and amplitudes are the last iterate's.
    NotConverged {
        /// The solver's status.
        status: Status,
    },
    /// No spike was found.
    NoSpikes,
    /// Why a method stopped short of its target, and what to do, in the method's own words.
    Stopped {
        /// The method's documented stop reason.
        reason: String,
    },
    /// The residual is larger than the noise level explains: a line may be missing, or `σ` is too low.
    ResidualAboveNoise {
        /// `‖y − Fμ̂‖² / (σ² (|K| − 1.5 s))`, about 1 for a correct model.
        ratio: f64,
    },
    /// The residual is smaller than the noise level explains: the fit follows the noise (spurious lines
    /// likely), or `σ` is too high.
    ResidualBelowNoise {
        /// `‖y − Fμ̂‖² / (σ² (|K| − 1.5 s))`, about 1 for a correct model.
        ratio: f64,
    },
    /// At this noise level the Cramér–Rao bound puts a line's position uncertainty at a sizeable fraction
    /// of a Rayleigh length or of the distance to its neighbour.
    NoisyPositions {
        /// Largest plug-in CRB standard deviation of a position, in Rayleigh units.
        worst_std_fc: f64,
    },
    /// A model order chosen by a statistical criterion was larger than the number of components the
    /// noise supports; the weakest were dropped (the subspace methods' pruning).
    OrderPruned {
        /// The order the criterion chose.
        estimated: usize,
        /// The spikes kept.
        kept: usize,
    },
    /// Sources of a multi-snapshot record closer than the array's resolution `1/M` (`M` sensors
    /// spanned): the array counterpart of [`Warning::UnderResolved`].
    SourcesUnderResolved {
        /// Minimum separation of the sources in resolution cells `1/M`.
        separation_cells: f64,
        /// The same in `1/fc`, `fc = (M − 1)/2`.
        separation_fc: f64,
    },
    /// Sources of a multi-snapshot record resolved by the array but closer than
    /// [`PROVEN_SEPARATION_FC`]`/fc`: the single-snapshot threshold, which is also the worst case of
    /// many snapshots (coherent sources reduce the problem to one snapshot).
    SourcesBelowProvenSeparation {
        /// Minimum separation of the sources in resolution cells `1/M`.
        separation_cells: f64,
        /// The same in `1/fc`, `fc = (M − 1)/2`.
        separation_fc: f64,
    },
    /// An array whose element spacing exceeds half a wavelength: every spatial frequency maps to more
    /// than one direction (grating lobes), so each reported angle is one of several possible.
    AmbiguousAngles {
        /// The element spacing in wavelengths.
        spacing: f64,
    },
    /// A source whose spatial frequency lies outside the visible region `|f| ≤ d` of an array with
    /// spacing `d < 1/2` wavelengths: no direction of arrival produces it (an artifact, or a wrong
    /// spacing).
    OutsideVisibleRegion {
        /// The source's signed spatial frequency, cycles per sensor.
        frequency: f64,
        /// The element spacing in wavelengths.
        spacing: f64,
    },
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::BelowProvenSeparation {
                separation_fc,
                separation_cells,
            } => write!(
                f,
                "the closest lines are {separation_cells:.3} resolution cells (1/N) apart: the \
                 record resolves them, but they are {separation_fc:.3}/fc apart, below the \
                 separation {PROVEN_SEPARATION_FC}/fc above which TV recovery is proven exact; \
                 their positions and amplitudes may be wrong"
            ),
            Warning::UnderResolved {
                separation_fc,
                separation_cells,
            } => write!(
                f,
                "UNDER-RESOLVED: the closest lines are {separation_cells:.3} resolution cells (1/N) \
                 apart ({separation_fc:.3}/fc), closer than the record can resolve; close lines may \
                 be merged, split or misplaced"
            ),
            Warning::NearZeroFrequency {
                frequency,
                cells,
                amplitude,
                trend_fitted: false,
            } => write!(
                f,
                "a line at frequency {frequency:.4e} (amplitude {amplitude:.4}) lies {cells:.2} \
                 resolution cells from zero frequency: most likely an offset or trend in the \
                 record, not a periodic component; fit a trend (offset or linear) or disregard it"
            ),
            Warning::NearZeroFrequency {
                frequency,
                cells,
                amplitude,
                trend_fitted: true,
            } => write!(
                f,
                "a line at frequency {frequency:.4e} (amplitude {amplitude:.4}) lies {cells:.2} \
                 resolution cells from zero frequency, next to the fitted trend: a record this \
                 long cannot tell it from a slow drift, wander or red noise; do not read it as a \
                 periodic component without other evidence (if the record drifts, a trend of \
                 higher degree may absorb it)"
            ),
            Warning::CancellingPair {
                positions,
                cells,
                amplitudes,
                sum,
                phase_deg,
            } => write!(
                f,
                "ARTIFACT: the lines at {:.6} and {:.6} are {cells:.3} resolution cells apart with \
                 phases {phase_deg:.0}° apart and amplitudes {:.4} and {:.4} that nearly cancel (sum \
                 {sum:.4}): a fitting artifact (often a trend, an offset or red noise), not two \
                 physical lines",
                positions.0, positions.1, amplitudes.0, amplitudes.1
            ),
            Warning::NoiseNotWhite {
                ratio,
                threshold,
                loudest_at,
            } => write!(
                f,
                "the noise is not white: the residual's level varies by a factor {ratio:.1} across \
                 the band (white noise stays below {threshold:.1}), loudest in the eighth of the band \
                 centred on frequency {loudest_at} (the record's unit); lines there are less certain than their bounds say, small lines there may be \
                 noise, and the noise level is the band's average"
            ),
            Warning::CertificateViolated { max_modulus } => write!(
                f,
                "the dual certificate fails (max |q| = {max_modulus:.6} > 1): the solution is not \
                 certified optimal"
            ),
            Warning::WeakCertificate { max_off_support } => write!(
                f,
                "|q| reaches {max_off_support:.6} away from the support: the support is barely \
                 identified and an extra or missing spike is possible"
            ),
            Warning::NotConverged { status } => write!(
                f,
                "the solver stopped with status '{status}': the result is the last iterate, not a \
                 converged solution"
            ),
            Warning::NoSpikes => f.write_str("no spike was found"),
            Warning::Stopped { reason } => write!(f, "the method stopped: {reason}"),
            Warning::ResidualAboveNoise { ratio } => write!(
                f,
                "the residual is {ratio:.2}× what the noise level explains: a line may be missing or \
                 the noise level is underestimated"
            ),
            Warning::ResidualBelowNoise { ratio } => write!(
                f,
                "the residual is only {ratio:.2}× what the noise level explains: the fit follows the \
                 noise (spurious lines likely) or the noise level is overestimated"
            ),
            Warning::NoisyPositions { worst_std_fc } => write!(
                f,
                "NOISE-LIMITED: the noise allows position errors of ±{worst_std_fc:.3}/fc (one \
                 standard deviation, Cramér–Rao bound) — comparable to the line spacing or the \
                 resolution claimed; treat close lines with caution"
            ),
            Warning::OrderPruned { estimated, kept } => write!(
                f,
                "the model-order criterion chose {estimated} components but only {kept} stand above \
                 the noise; the others were dropped"
            ),
            Warning::SourcesUnderResolved {
                separation_cells,
                separation_fc,
            } => write!(
                f,
                "UNDER-RESOLVED: the closest sources are {separation_cells:.3} resolution cells \
                 (1/M) apart ({separation_fc:.3}/fc), closer than the array can resolve; close \
                 sources may be merged, split or misplaced"
            ),
            Warning::SourcesBelowProvenSeparation {
                separation_cells,
                separation_fc,
            } => write!(
                f,
                "the closest sources are {separation_cells:.3} resolution cells (1/M) apart: the \
                 array resolves them, but they are {separation_fc:.3}/fc apart, below the \
                 separation {PROVEN_SEPARATION_FC}/fc above which exact recovery is proven for \
                 every source correlation (coherent sources included); their positions and powers \
                 may be wrong"
            ),
            Warning::AmbiguousAngles { spacing } => write!(
                f,
                "AMBIGUOUS ANGLES: the element spacing {spacing} wavelengths is above 1/2, so each \
                 spatial frequency has more than one direction of arrival (grating lobes); the \
                 angles reported are the ones nearest broadside, and the others are as likely"
            ),
            Warning::OutsideVisibleRegion { frequency, spacing } => write!(
                f,
                "a source at spatial frequency {frequency:.4} lies outside the visible region \
                 |f| ≤ {spacing} of this array: no direction of arrival gives it; it is an \
                 artifact or the spacing is wrong"
            ),
        }
    }
}

impl Serialize for Warning {
    fn serialize<S: Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        s.serialize_str(&self.to_string())
    }
}
