//! Command-line front end of finespike: `recover`, `simulate`, `compare`, `bound`, `plot`.
//!
//! The binary `finespike` (`src/main.rs`) only calls [`main`]; the subcommands live here, one module
//! per subcommand, so that their documentation builds without colliding with the library's (the
//! binary and the library would both be documented as `finespike`).
//!
//! Files: samples are CSV with header `k,re,im` (Fourier coefficients `y_k`) or `n,re,im` (time samples
//! `x_n`, stored as `k = −n`); spikes (truth or result) are JSON
//! `{"fc": 8, "sigma": 0.01, "spikes": [{"position": 0.25, "amplitude": [re, im]}]}`.
//!
//! Exit codes:
//! - 0 success;
//! - 2 bad command line: unknown option, missing or invalid value, an option the chosen method does
//!   not take (`--order`), a figure the files do not supply and no flag gives (σ, fc);
//! - 3 unreadable or malformed input file (file, line, what was found, what was expected), or data that
//!   are not a valid measurement set (duplicate index, index outside the band, fc = 0);
//! - 4 the estimator could not run on these data (e.g. a subspace method on a measured set with gaps);
//! - 5 an output could not be written.

mod array_bound;
mod array_compare;
mod array_input;
mod array_plot;
mod array_recover;
mod array_simulate;
mod bound;
mod campaign;
mod compare;
mod input;
mod plot;
mod recover;
mod show;
mod simulate;

use clap::{Args, Parser, Subcommand, ValueEnum};
use finespike::{AmplitudeKind, Domain, Error, NoiseLevel};
use std::io::Write;
use std::path::Path;
use std::process::ExitCode;

/// Exit codes, shown under every `--help`.
const EXIT_CODES: &str = "\
Exit codes:
  0  success
  2  bad command line (unknown option, invalid value, an option the method does not take,
     a figure such as σ or fc that neither the files nor the flags supply)
  3  unreadable or malformed input file (file, line, what was found, what was expected),
     or invalid data (duplicate index, index outside the band, fc = 0)
  4  the estimator could not run on these data
  5  an output could not be written";

/// Recover off-grid spikes (point sources, spectral lines) from band-limited Fourier samples or
/// uniform time samples, finer than the Rayleigh limit 1/fc.
///
/// Sample files are CSV with header `k,re,im` (Fourier coefficients y_k, k in -fc..fc, any subset)
/// or `n,re,im` (time samples x_n, n = 0..N-1). Spike files (truth or result) are JSON:
/// {"fc": 8, "sigma": 0.01, "spikes": [{"position": 0.25, "amplitude": [re, im]}]}; fc and sigma
/// are optional. Positions are on [0, 1) (for time samples: frequency in cycles per sample);
/// distances are reported in Rayleigh units (multiples of 1/fc).
#[derive(Parser, Debug)]
#[command(name = "finespike", version, about, long_about, after_help = EXIT_CODES)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    Recover(recover::RecoverArgs),
    Simulate(simulate::SimulateArgs),
    Compare(compare::CompareArgs),
    Bound(bound::BoundArgs),
    Plot(plot::PlotArgs),
}

/// Fourier coefficients or time samples.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq)]
enum DomainArg {
    /// Fourier coefficients y_k, k in -fc..fc (header `k,re,im`).
    Fourier,
    /// Uniform time samples x_n, n = 0..N-1 (header `n,re,im`).
    Time,
}

impl DomainArg {
    fn domain(self) -> Domain {
        match self {
            DomainArg::Fourier => Domain::Fourier,
            DomainArg::Time => Domain::Time,
        }
    }
}

/// Machine-readable output formats of `recover`.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq)]
enum Format {
    /// JSON: spikes, method, status, diagnostics.
    Json,
    /// CSV `position,re,im`.
    Csv,
}

/// Output formats of the reports (`compare`, `bound`).
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq)]
enum ReportFormat {
    /// Aligned plain text for reading.
    Text,
    /// CSV, one row per method or spike.
    Csv,
    /// JSON.
    Json,
}

/// How the amplitudes of an invented scene are drawn.
#[derive(ValueEnum, Clone, Copy, Debug)]
enum AmpArg {
    /// Modulus uniform in [0.5, 1.5], phase uniform.
    Complex,
    /// Real, uniform in [0.5, 1.5] (positive measures).
    RealPositive,
    /// Modulus 1, phase uniform.
    UnitModulus,
}

impl AmpArg {
    fn kind(self) -> AmplitudeKind {
        match self {
            AmpArg::Complex => AmplitudeKind::Complex,
            AmpArg::RealPositive => AmplitudeKind::RealPositive,
            AmpArg::UnitModulus => AmplitudeKind::UnitModulus,
        }
    }
}

/// The options that choose and set up an estimator (shared by `recover` and `plot`).
#[derive(Args, Debug, Clone)]
struct MethodArgs {
    /// Method name (the convex `sdp` is the default).
    #[arg(long, short, default_value = "sdp", value_parser = clap::builder::PossibleValuesParser::new(finespike::registry::method_names()))]
    method: String,
    /// Noise standard deviation σ (E|n_k|² = σ²) for the methods that use one; 0 means exact data;
    /// omitted: estimated from the data.
    #[arg(long, allow_hyphen_values = true)]
    sigma: Option<f64>,
    /// Model order (number of spikes), for the methods that take one: the subspace methods and
    /// greedy (any other method refuses it); omitted: the method decides (MDL, or the residual).
    #[arg(long)]
    order: Option<usize>,
    /// Solver of the convex problem, for sdp and ast: `auto` uses the interior point below fc = 25
    /// and the certified sliding Frank–Wolfe solver from there on.
    #[arg(long, value_enum, default_value_t = SolverArg::Auto)]
    solver: SolverArg,
}

/// `--solver`: which solver runs the convex problem of `sdp` and `ast`.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum SolverArg {
    /// Interior point below fc = 25, sliding Frank–Wolfe from there on.
    Auto,
    /// clarabel's interior point on the compact SDP (cost grows like N^5 or faster).
    InteriorPoint,
    /// The certified sliding Frank–Wolfe solver (for long records).
    Sliding,
}

impl SolverArg {
    /// The library's backend.
    pub fn backend(self) -> finespike::Backend {
        match self {
            SolverArg::Auto => finespike::Backend::Auto,
            SolverArg::InteriorPoint => finespike::Backend::InteriorPoint,
            SolverArg::Sliding => finespike::Backend::SlidingFrankWolfe,
        }
    }
}

/// Why a command failed; each maps to an exit code.
enum Failure {
    /// Exit 2.
    Usage(String),
    /// Exit 3.
    Input(Error),
    /// Exit 4.
    Estimate(Error),
    /// Exit 4: no method produced an estimate (`compare`).
    NoEstimate(String),
    /// Exit 5.
    Output(String),
    /// Exit 0: the reader of standard output closed it (a pipe into `head`); nothing left to say.
    Closed,
}

/// Parse the command line, run the subcommand and map its failure to an exit code (see above).
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Recover(a) => recover::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Compare(a) => compare::run(a),
        Command::Bound(a) => bound::run(a),
        Command::Plot(a) => plot::run(a),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure::Usage(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(2)
        }
        Err(Failure::Input(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(3)
        }
        Err(Failure::Estimate(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(4)
        }
        Err(Failure::NoEstimate(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(4)
        }
        Err(Failure::Output(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(5)
        }
        Err(Failure::Closed) => ExitCode::SUCCESS,
    }
}

/// The noise level for `--sigma`: omitted → estimated, 0 → exact, else known.
fn noise_level(sigma: Option<f64>) -> NoiseLevel {
    match sigma {
        None => NoiseLevel::Estimate,
        Some(0.0) => NoiseLevel::Exact,
        Some(s) => NoiseLevel::Known(s),
    }
}

/// The noise level asked for with `--sigma`, checked once with the library's noise-level rule
/// ([`NoiseLevel::validated`]): a negative or non-finite σ is a command-line error.
fn requested_noise(sigma: Option<f64>) -> Result<NoiseLevel, Failure> {
    noise_level(sigma).validated().map_err(|e| match e {
        Error::InvalidSetting { value, rule, .. } => {
            Failure::Usage(format!("--sigma {value}: {rule}"))
        }
        other => Failure::Usage(format!("--sigma: {other}")),
    })
}

/// Build the estimator of `args` with the requested noise level `noise`; an invalid setting or an
/// option the method does not take is a command-line error. Notes about ignored options go to stderr.
fn configure(
    args: &MethodArgs,
    noise: NoiseLevel,
) -> Result<Box<dyn finespike::Estimator>, Failure> {
    let options = finespike::registry::MethodOptions {
        noise,
        order: args.order,
        backend: args.solver.backend(),
    };
    let configured =
        finespike::registry::configure(&args.method, &options).map_err(|e| match e {
            Error::OptionNotTaken { method, takers, .. } => Failure::Usage(format!(
            "--order is not available for method '{method}': it takes no model order; the methods \
             that take one are {takers}"
        )),
            other => Failure::Usage(other.to_string()),
        })?;
    for what in &configured.unused {
        let flag = if *what == "noise level" {
            "--sigma"
        } else {
            "--solver"
        };
        eprintln!(
            "note: method '{}' does not use a {what}; {flag} is ignored",
            args.method
        );
    }
    Ok(configured.estimator)
}

/// Write `text` to standard output. A reader that has gone away (`finespike … | head`) ends the
/// command quietly with [`Failure::Closed`] instead of a panic; any other write error is exit 5.
fn emit(text: &str) -> Result<(), Failure> {
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Err(Failure::Closed),
        Err(e) => Err(Failure::Output(format!(
            "cannot write to standard output: {e}"
        ))),
    }
}

/// Write `text` to `path`, or to stdout for `-`.
fn write_output(path: &Path, text: &str) -> Result<(), Failure> {
    if path == Path::new("-") {
        return emit(text);
    }
    std::fs::write(path, text)
        .map_err(|e| Failure::Output(format!("cannot write {}: {e}", path.display())))
}

/// A path for display.
fn shown(path: &Path) -> String {
    path.display().to_string()
}

/// A `PathBuf` argument's file name, for captions.
fn file_name(path: &Path) -> String {
    path.file_name()
        .map_or_else(|| shown(path), |n| n.to_string_lossy().into_owned())
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn command_line_definition_is_consistent() {
        Cli::command().debug_assert();
    }

    #[test]
    fn sigma_maps_to_noise_levels() {
        assert_eq!(noise_level(None), NoiseLevel::Estimate);
        assert_eq!(noise_level(Some(0.0)), NoiseLevel::Exact);
        assert_eq!(noise_level(Some(0.5)), NoiseLevel::Known(0.5));
        assert!(requested_noise(Some(0.5)).is_ok());
        for bad in [-1.0, f64::NAN, f64::INFINITY] {
            assert!(matches!(requested_noise(Some(bad)), Err(Failure::Usage(_))));
        }
    }
}
