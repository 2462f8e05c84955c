//! Command-line front end of finespike.
//!
//! Exit codes: 0 success; 2 bad command line (unknown option, missing value); 3 unreadable or malformed
//! input file, or invalid data; 4 the estimator could not run on these data; 5 output could not be
//! written.

use clap::{Parser, Subcommand, ValueEnum};
use finespike::io::{self, SpikeFile};
use finespike::{
    estimator_by_name, AmplitudeKind, Ast, Domain, Error, Estimate, Estimator, NoiseLevel,
    Scenario, Tv, METHODS,
};
use std::path::PathBuf;
use std::process::ExitCode;

/// Recover off-grid spikes (point sources, spectral lines) from band-limited Fourier samples or
/// uniform time samples, finer than the Rayleigh limit 1/fc.
#[derive(Parser, Debug)]
#[command(name = "finespike", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Recover spikes from a sample file and print the result as JSON (or CSV) on stdout.
    ///
    /// The input is CSV with header `k,re,im` (Fourier coefficients y_k, k in -fc..fc) or `n,re,im`
    /// (time samples x_n, n = 0..N-1). Warnings (under-resolved lines, weak certificate, no
    /// convergence) are also printed on stderr.
    Recover {
        /// Sample file (CSV, header `k,re,im` or `n,re,im`).
        #[arg(long, short)]
        input: PathBuf,
        /// Method name.
        #[arg(long, short, default_value = "sdp", value_parser = clap::builder::PossibleValuesParser::new(METHODS))]
        method: String,
        /// Cutoff fc of the band -fc..fc (Fourier files; default: the largest |k| in the file).
        #[arg(long)]
        fc: Option<usize>,
        /// Expected domain; the file header must agree (default: taken from the header).
        #[arg(long, value_enum)]
        domain: Option<DomainArg>,
        /// Noise standard deviation σ (E|n_k|² = σ²). 0 means exact data; omitted: estimated.
        #[arg(long)]
        sigma: Option<f64>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = Format::Json)]
        format: Format,
    },
    /// Write an invented scene: a sample CSV and its truth JSON.
    Simulate {
        /// Cutoff fc (band -fc..fc, or 2fc+1 time samples).
        #[arg(long, default_value_t = 16)]
        fc: usize,
        /// Number of spikes.
        #[arg(long, default_value_t = 3)]
        count: usize,
        /// Minimum separation in Rayleigh units (Δ·fc).
        #[arg(long, default_value_t = 2.0)]
        separation: f64,
        /// Signal-to-noise ratio of the weakest spike in dB (omitted: exact data).
        #[arg(long)]
        snr: Option<f64>,
        /// Amplitude kind.
        #[arg(long, value_enum, default_value_t = AmpArg::Complex)]
        amplitudes: AmpArg,
        /// Random seed.
        #[arg(long, default_value_t = 0)]
        seed: u64,
        /// Fraction of the band's coefficients kept at random.
        #[arg(long, default_value_t = 1.0)]
        subset: f64,
        /// Fourier coefficients or time samples.
        #[arg(long, value_enum, default_value_t = DomainArg::Fourier)]
        domain: DomainArg,
        /// Where to write the samples (CSV).
        #[arg(long)]
        out: PathBuf,
        /// Where to write the truth (JSON).
        #[arg(long)]
        truth: PathBuf,
    },
}

#[derive(ValueEnum, Clone, Copy, Debug, PartialEq)]
enum DomainArg {
    Fourier,
    Time,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
enum Format {
    Json,
    Csv,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
enum AmpArg {
    Complex,
    RealPositive,
    UnitModulus,
}

enum Failure {
    Input(Error),
    Estimate(Error),
    Output(String),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure::Input(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(3)
        }
        Err(Failure::Estimate(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(4)
        }
        Err(Failure::Output(e)) => {
            eprintln!("error: {e}");
            ExitCode::from(5)
        }
    }
}

fn noise_level(sigma: Option<f64>) -> NoiseLevel {
    match sigma {
        None => NoiseLevel::Estimate,
        Some(s) => {
            if s == 0.0 {
                NoiseLevel::Exact
            } else {
                NoiseLevel::Known(s)
            }
        }
    }
}

fn build_estimator(method: &str, sigma: Option<f64>) -> Result<Box<dyn Estimator>, Error> {
    let noise = noise_level(sigma).validated()?;
    Ok(match method {
        "sdp" => Box::new(Tv {
            noise,
            ..Tv::default()
        }),
        "ast" => Box::new(Ast {
            noise,
            ..Ast::default()
        }),
        "sfw" => Box::new(finespike::Sfw {
            noise,
            ..finespike::Sfw::default()
        }),
        "greedy" => Box::new(finespike::greedy::Greedy {
            noise,
            ..finespike::greedy::Greedy::default()
        }),
        other => estimator_by_name(other)?,
    })
}

fn run(cli: Cli) -> Result<(), Failure> {
    match cli.command {
        Command::Recover {
            input,
            method,
            fc,
            domain,
            sigma,
            format,
        } => {
            let rows = io::read_samples(&input).map_err(Failure::Input)?;
            if let Some(d) = domain {
                let want = match d {
                    DomainArg::Fourier => Domain::Fourier,
                    DomainArg::Time => Domain::Time,
                };
                if want != rows.domain {
                    let header = if rows.domain == Domain::Fourier {
                        "k,re,im"
                    } else {
                        "n,re,im"
                    };
                    return Err(Failure::Input(Error::Parse {
                        source_name: input.display().to_string(),
                        line: 1,
                        message: format!(
                            "--domain {} expects header '{}', found '{header}'",
                            if want == Domain::Fourier {
                                "fourier"
                            } else {
                                "time"
                            },
                            if want == Domain::Fourier {
                                "k,re,im"
                            } else {
                                "n,re,im"
                            },
                        ),
                    }));
                }
            }
            let data = rows.into_measurements(fc).map_err(Failure::Input)?;
            let est = build_estimator(&method, sigma).map_err(Failure::Input)?;
            let estimate = est.estimate(&data).map_err(Failure::Estimate)?;
            report_warnings(&estimate);
            let text = match format {
                Format::Json => io::estimate_to_json(&estimate),
                Format::Csv => io::spikes_to_csv(&estimate.spikes),
            };
            println!("{}", text.trim_end());
            Ok(())
        }
        Command::Simulate {
            fc,
            count,
            separation,
            snr,
            amplitudes,
            seed,
            subset,
            domain,
            out,
            truth,
        } => {
            let mut sc = Scenario::new(fc, count)
                .with_separation(separation)
                .with_amplitudes(match amplitudes {
                    AmpArg::Complex => AmplitudeKind::Complex,
                    AmpArg::RealPositive => AmplitudeKind::RealPositive,
                    AmpArg::UnitModulus => AmplitudeKind::UnitModulus,
                })
                .with_seed(seed)
                .with_subset_fraction(subset)
                .with_domain(match domain {
                    DomainArg::Fourier => Domain::Fourier,
                    DomainArg::Time => Domain::Time,
                });
            if let Some(s) = snr {
                sc = sc.with_snr_db(s);
            }
            let sample = sc.generate().map_err(Failure::Input)?;
            let file = SpikeFile {
                fc: Some(sample.data.fc()),
                sigma: Some(sample.sigma),
                spikes: sample.truth.clone(),
            };
            let json =
                serde_json::to_string_pretty(&file).map_err(|e| Failure::Output(e.to_string()))?;
            write(&out, &io::samples_to_csv(&sample.data))?;
            write(&truth, &json)?;
            Ok(())
        }
    }
}

fn write(path: &PathBuf, text: &str) -> Result<(), Failure> {
    std::fs::write(path, text)
        .map_err(|e| Failure::Output(format!("cannot write {}: {e}", path.display())))
}

fn report_warnings(estimate: &Estimate) {
    if !estimate.status.is_usable() {
        eprintln!("warning: solver status '{}'", estimate.status);
    }
    for w in &estimate.diagnostics.warnings {
        eprintln!("warning: {w}");
    }
}
