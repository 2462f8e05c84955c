//! Running a [`ConicProgram`] through clarabel's interior point and translating its outcome.
//!
//! clarabel (Goulart & Chen 2024, arXiv:2405.12762) solves `min ½vᵀPv + qᵀv s.t. Av + s = b, s ∈ K`; we use
//! its PSD-triangle cone and the faer supernodal LDLᵀ (`direct_solve_method = "faer"`), which on this
//! problem's dense PSD block is an order of magnitude faster than the default QDLDL.

use super::compact::{Cone, ConicProgram};
use crate::error::{Error, Result};
use crate::estimator::Status;
use clarabel::algebra::CscMatrix;
use clarabel::solver::{
    DefaultSettingsBuilder, DefaultSolver, IPSolver, SolverStatus, SupportedConeT,
};

/// What we keep of a clarabel run.
#[derive(Debug, Clone)]
pub(crate) struct ConicSolution {
    pub z: Vec<f64>,
    pub status: Status,
    pub iterations: usize,
    pub primal_objective: f64,
    pub dual_objective: f64,
}

/// Interior-point settings passed to clarabel.
#[derive(Debug, Clone, Copy)]
pub(crate) struct IpmSettings {
    pub max_iter: u32,
    pub tolerance: f64,
    pub time_limit: f64,
}

/// Map clarabel's status onto ours (never re-exported).
pub(crate) fn map_status(s: SolverStatus) -> Status {
    match s {
        SolverStatus::Solved => Status::Solved,
        SolverStatus::AlmostSolved => Status::ReducedAccuracy,
        SolverStatus::MaxIterations => Status::IterationLimit,
        SolverStatus::MaxTime => Status::TimeLimit,
        SolverStatus::PrimalInfeasible
        | SolverStatus::DualInfeasible
        | SolverStatus::AlmostPrimalInfeasible
        | SolverStatus::AlmostDualInfeasible => Status::Infeasible,
        _ => Status::NumericalFailure,
    }
}

/// Solve `prog` (with optional extra cones appended after the PSD block and a quadratic term `p`).
pub(crate) fn solve(prog: &ConicProgram, settings: IpmSettings) -> Result<ConicSolution> {
    let rows = prog.b.len();
    let a = CscMatrix::new(
        rows,
        prog.nvars,
        prog.a_colptr.clone(),
        prog.a_rowval.clone(),
        prog.a_nzval.clone(),
    );
    // P is diagonal: one entry per column where nonzero.
    let mut p_colptr = vec![0];
    let mut p_rowval = Vec::new();
    let mut p_nzval = Vec::new();
    for (i, &d) in prog.p_diag.iter().enumerate() {
        if d != 0.0 {
            p_rowval.push(i);
            p_nzval.push(d);
        }
        p_colptr.push(p_rowval.len());
    }
    let p = CscMatrix::new(prog.nvars, prog.nvars, p_colptr, p_rowval, p_nzval);
    let cones: Vec<SupportedConeT<f64>> = prog
        .cones
        .iter()
        .map(|c| match *c {
            Cone::Psd(size) => SupportedConeT::PSDTriangleConeT(size),
            Cone::Soc(dim) => SupportedConeT::SecondOrderConeT(dim),
        })
        .collect();
    let built = DefaultSettingsBuilder::default()
        .verbose(false)
        .max_iter(settings.max_iter)
        .time_limit(settings.time_limit)
        .tol_gap_abs(settings.tolerance)
        .tol_gap_rel(settings.tolerance)
        .tol_feas(settings.tolerance)
        .direct_solve_method("faer".to_string())
        // One thread: clarabel's faer factorisation would otherwise split its work over rayon's
        // current pool, and the rounding of the answer would depend on the number of threads
        // (the joint SDP moved by 1e-10 between a pool of 1 and of 3); batches and campaigns
        // promise results identical to one-by-one runs and run the records in parallel instead.
        .max_threads(1)
        .presolve_enable(false)
        .chordal_decomposition_enable(false)
        .build()
        .map_err(|e| Error::Numerical {
            step: "clarabel settings",
            detail: e.to_string(),
        })?;
    let mut solver = DefaultSolver::new(&p, &prog.q, &a, &prog.b, &cones, built).map_err(|e| {
        Error::Numerical {
            step: "clarabel problem set-up",
            detail: e.to_string(),
        }
    })?;
    // clarabel 0.11 panics instead of returning an error when a factorisation inside its PSD cone
    // fails (`expect("SVD error")` in the cone's scaling update), e.g. for a data-fit radius some
    // hundred orders of magnitude above the data. The panic is turned into a typed error here: the
    // library must not take the caller's process down.
    let solved = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| solver.solve()));
    if let Err(payload) = solved {
        let detail = payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "the solver stopped on an internal error".to_string());
        return Err(Error::Numerical {
            step: "clarabel interior point",
            detail,
        });
    }
    let sol = &solver.solution;
    Ok(ConicSolution {
        z: sol.z.clone(),
        status: map_status(sol.status),
        iterations: sol.iterations as usize,
        primal_objective: sol.obj_val + prog.offset,
        dual_objective: sol.obj_val_dual + prog.offset,
    })
}
