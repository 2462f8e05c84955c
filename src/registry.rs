//! The method registry: one row per estimator — its name, what it takes besides the data, and how to
//! build it. [`METHODS`], [`estimator_by_name`], [`configure`] (used by the sweeps and the command
//! line) and the command line's option checks all read this table; adding an estimator is one file
//! plus one row here.
//!
//! ```
//! use finespike::registry::{configure, method, MethodOptions};
//! use finespike::NoiseLevel;
//! assert!(method("esprit")?.takes_order);
//! let options = MethodOptions { noise: NoiseLevel::Known(0.1), order: Some(2), ..MethodOptions::default() };
//! let built = configure("esprit", &options)?;
//! assert_eq!(built.estimator.name(), "esprit");
//! assert!(configure("sdp", &options).is_err()); // sdp takes no model order
//! # Ok::<(), finespike::Error>(())
//! ```

use crate::error::{Error, Result};
use crate::estimator::{Estimator, NoiseLevel};
use crate::greedy::Greedy;
use crate::grid::GridL1;
use crate::subspace::{Esprit, MatrixPencil, Music, OrderSelection, SubspaceSettings};
use crate::tv::{Ast, Backend, Sfw, Tv, TvSettings};

/// What a caller asks of an estimator beyond its defaults.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct MethodOptions {
    /// Noise level (default: estimated from the data).
    pub noise: NoiseLevel,
    /// Model order (number of spikes), for the methods that take one (default: the method decides).
    pub order: Option<usize>,
    /// Solver of the convex problem, for the methods that have a choice (default [`Backend::Auto`]).
    pub backend: Backend,
}

/// How a method uses a noise level.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum NoiseUse {
    /// In the estimate itself (the data-fit level, the stopping rule, the amplitude floor) and in the
    /// diagnostics.
    Estimate,
    /// In the diagnostics (residual check, plug-in Cramér–Rao bound) and the pruning of an order chosen
    /// by a statistical criterion; the positions come from the subspace alone.
    Diagnostics,
}

/// One row of the registry.
#[derive(Debug, Clone, Copy)]
pub struct Method {
    /// The name, as on the command line.
    pub name: &'static str,
    /// What the method solves, in a line.
    pub summary: &'static str,
    /// How it uses a noise level.
    pub noise: NoiseUse,
    /// Whether it takes a model order ([`MethodOptions::order`]).
    pub takes_order: bool,
    /// Whether it takes a solver choice ([`MethodOptions::backend`]).
    pub takes_backend: bool,
    /// Whether it accepts a measured set with gaps.
    pub accepts_gaps: bool,
    /// Whether it takes multi-snapshot records ([`crate::Estimator::estimate_snapshots`]).
    pub takes_snapshots: bool,
    build: fn(&MethodOptions) -> Result<Box<dyn Estimator>>,
}

impl Method {
    /// The estimator with `options` applied (the option checks are [`configure`]'s).
    fn build(&self, options: &MethodOptions) -> Result<Box<dyn Estimator>> {
        (self.build)(options)
    }
}

fn subspace(options: &MethodOptions) -> Result<SubspaceSettings> {
    let settings = SubspaceSettings::default().with_noise(options.noise)?;
    match options.order {
        Some(n) => settings.with_order(OrderSelection::Given(n)),
        None => Ok(settings),
    }
}

/// Every estimator of the crate, in the order the command line lists them.
pub const METHODS: &[Method] = &[
    Method {
        name: "sdp",
        summary:
            "TV-norm minimisation, exact or in a noise ball (interior point or sliding solver)",
        noise: NoiseUse::Estimate,
        takes_order: false,
        takes_backend: true,
        accepts_gaps: true,
        takes_snapshots: true,
        build: |o| {
            Ok(Box::new(Tv {
                noise: o.noise,
                settings: TvSettings::default().with_backend(o.backend),
            }))
        },
    },
    Method {
        name: "ast",
        summary: "atomic-norm soft thresholding (interior point or sliding solver)",
        noise: NoiseUse::Estimate,
        takes_order: false,
        takes_backend: true,
        accepts_gaps: true,
        takes_snapshots: true,
        build: |o| {
            Ok(Box::new(Ast {
                noise: o.noise,
                settings: TvSettings::default().with_backend(o.backend),
                ..Ast::default()
            }))
        },
    },
    Method {
        name: "sfw",
        summary: "TV-norm minimisation by the certified Sliding Frank-Wolfe solver only",
        noise: NoiseUse::Estimate,
        takes_order: false,
        takes_backend: false,
        accepts_gaps: true,
        takes_snapshots: true,
        build: |o| Ok(Box::new(Sfw::default().with_noise(o.noise))),
    },
    Method {
        name: "greedy",
        summary: "greedy continuous fit with sliding positions down to the noise level",
        noise: NoiseUse::Estimate,
        takes_order: true,
        takes_backend: false,
        accepts_gaps: true,
        takes_snapshots: false,
        build: |o| {
            let g = Greedy {
                noise: o.noise,
                ..Greedy::default()
            };
            Ok(Box::new(match o.order {
                Some(n) => g.with_count(n)?,
                None => g,
            }))
        },
    },
    Method {
        name: "grid",
        summary: "l1 on a fine grid (FISTA), grid clusters to off-grid spikes",
        noise: NoiseUse::Estimate,
        takes_order: false,
        takes_backend: false,
        accepts_gaps: true,
        takes_snapshots: false,
        build: |o| {
            Ok(Box::new(GridL1 {
                noise: o.noise,
                ..GridL1::default()
            }))
        },
    },
    Method {
        name: "music",
        summary: "root-MUSIC on the Hankel matrix of a contiguous record, or on the smoothed covariance of snapshots",
        noise: NoiseUse::Diagnostics,
        takes_order: true,
        takes_backend: false,
        accepts_gaps: false,
        takes_snapshots: true,
        build: |o| Ok(Box::new(Music::new(subspace(o)?))),
    },
    Method {
        name: "esprit",
        summary: "TLS-ESPRIT on the Hankel matrix of a contiguous record, or on the smoothed covariance of snapshots",
        noise: NoiseUse::Diagnostics,
        takes_order: true,
        takes_backend: false,
        accepts_gaps: false,
        takes_snapshots: true,
        build: |o| Ok(Box::new(Esprit::new(subspace(o)?))),
    },
    Method {
        name: "pencil",
        summary: "matrix pencil on the Hankel matrix of a contiguous record, or on the smoothed covariance of snapshots",
        noise: NoiseUse::Diagnostics,
        takes_order: true,
        takes_backend: false,
        accepts_gaps: false,
        takes_snapshots: true,
        build: |o| Ok(Box::new(MatrixPencil::new(subspace(o)?))),
    },
];

/// The registry row of `name`.
///
/// # Errors
/// [`Error::UnknownMethod`] for a name not in [`METHODS`].
pub fn method(name: &str) -> Result<&'static Method> {
    METHODS
        .iter()
        .find(|m| m.name == name)
        .ok_or_else(|| Error::UnknownMethod {
            name: name.to_string(),
            known: method_names().collect::<Vec<_>>().join(", "),
        })
}

/// The names of [`METHODS`], in order.
pub fn method_names() -> impl Iterator<Item = &'static str> {
    METHODS.iter().map(|m| m.name)
}

/// The names of the methods that take a model order, in the order of [`METHODS`].
pub fn methods_with_order() -> Vec<&'static str> {
    METHODS
        .iter()
        .filter(|m| m.takes_order)
        .map(|m| m.name)
        .collect()
}

/// An estimator with default settings, by its method name.
///
/// # Errors
/// [`Error::UnknownMethod`] for a name not in [`METHODS`].
pub fn estimator_by_name(name: &str) -> Result<Box<dyn Estimator>> {
    method(name)?.build(&MethodOptions::default())
}

/// An estimator built by [`configure`], and the requested options it does not use.
#[derive(Debug)]
pub struct Configured {
    /// The estimator.
    pub estimator: Box<dyn Estimator>,
    /// Requested options that this method does not use (`"solver choice"`), for a note to the user.
    pub unused: Vec<&'static str>,
}

/// Build the estimator called `name` with `options` applied where the method takes them.
///
/// # Errors
/// - [`Error::UnknownMethod`] for a name not in [`METHODS`];
/// - [`Error::OptionNotTaken`] for a model order asked of a method without one (the error lists the
///   methods that take one);
/// - [`Error::InvalidSetting`] for an order of 0 or a noise level that is negative or not finite.
pub fn configure(name: &str, options: &MethodOptions) -> Result<Configured> {
    let m = method(name)?;
    let options = MethodOptions {
        noise: options.noise.validated()?,
        ..*options
    };
    if options.order.is_some() && !m.takes_order {
        return Err(Error::OptionNotTaken {
            method: name.to_string(),
            option: "model order",
            takers: methods_with_order().join(", "),
        });
    }
    let mut unused = Vec::new();
    if options.backend != Backend::Auto && !m.takes_backend {
        unused.push("solver choice");
    }
    Ok(Configured {
        estimator: m.build(&options)?,
        unused,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward, Measurements, Spikes};
    use num_complex::Complex64;

    #[test]
    fn every_row_builds_an_estimator_of_its_name() {
        for m in METHODS {
            assert_eq!(estimator_by_name(m.name).unwrap().name(), m.name);
        }
        assert!(matches!(
            estimator_by_name("nosuch"),
            Err(Error::UnknownMethod { .. })
        ));
    }

    #[test]
    fn snapshot_takers_are_listed_in_the_refusal() {
        let takers: Vec<&str> = METHODS
            .iter()
            .filter(|m| m.takes_snapshots)
            .map(|m| m.name)
            .collect();
        assert_eq!(takers.join(", "), crate::SNAPSHOT_METHODS);
    }

    #[test]
    fn order_only_where_a_method_takes_one() {
        let with_order = MethodOptions {
            order: Some(2),
            ..MethodOptions::default()
        };
        for m in METHODS {
            let r = configure(m.name, &with_order);
            assert_eq!(r.is_ok(), m.takes_order, "{}", m.name);
            if let Err(e) = r {
                assert!(matches!(e, Error::OptionNotTaken { .. }), "{e}");
                assert!(e.to_string().contains("music"), "{e}");
            }
        }
        let zero = MethodOptions {
            order: Some(0),
            ..MethodOptions::default()
        };
        assert!(configure("esprit", &zero).is_err());
        let bad = MethodOptions {
            noise: NoiseLevel::Known(-1.0),
            ..MethodOptions::default()
        };
        assert!(configure("sdp", &bad).is_err());
    }

    #[test]
    fn solver_choice_reaches_the_convex_methods_and_is_reported_unused_elsewhere() {
        let sliding = MethodOptions {
            noise: NoiseLevel::Exact,
            backend: Backend::SlidingFrankWolfe,
            ..MethodOptions::default()
        };
        assert_eq!(
            configure("esprit", &sliding).unwrap().unused,
            vec!["solver choice"]
        );
        let one = Complex64::new(1.0, 0.0);
        let truth = Spikes::from_parts(&[0.2, 0.6], &[one, one]).unwrap();
        let k: Vec<i64> = (-8..=8).collect();
        let data = Measurements::fourier(8, &k, &forward(&truth, &k)).unwrap();
        let c = configure("sdp", &sliding).unwrap();
        assert!(c.unused.is_empty());
        let est = c.estimator.estimate(&data).unwrap();
        assert_eq!(
            est.diagnostics.solver,
            Some(crate::tv::sliding::SLIDING_FRANK_WOLFE)
        );
    }
}
