//! The sections of `docs/evaluation.md` after the checks and the table: what each study ran, its
//! figure and its numbers.

use crate::cost::{exponent, Point};
use crate::numbers::{crb_rows, half_separation, resolution_rows, threshold_snr, BREAK_RATIO};
use crate::report::{fmt, table, Results};
use crate::Mode;
use finespike::eval::campaign::Campaign;
use std::fmt::Write as _;

/// Noiseless recovery maps.
pub fn phase_transitions(md: &mut String, r: &Results) {
    let w = &mut *md;
    writeln!(w, "\n## Phase transitions of noiseless recovery\n").ok();
    writeln!(
        w,
        "![exact recovery maps](evaluation-phase-transitions.svg)\n\nFourier band −16..16 (N = 33, \
         fc = 16), exact data, spikes in a cluster each exactly the separation from its neighbour, \
         moduli uniform in [0.5, 1.5]; {} draws per cell. Success: nothing missed or spurious and \
         every spike within 10⁻³/N. Separations run to 2.5/N ≈ 1.2/fc, just below the proven 1.26/fc \
         (checked separately above). Methods given the true number of spikes where they take one \
         (subspace methods, greedy); sdp and grid choose their own. Grey cells: the cluster does not \
         fit.\n",
        r.heat.plan.draws
    )
    .ok();
}

/// Accuracy against the Cramér–Rao bound: figure, threshold SNR, RMSE/√CRB by SNR.
pub fn accuracy(md: &mut String, r: &Results) {
    let w = &mut *md;
    writeln!(w, "## Accuracy against the Cramér–Rao bound\n").ok();
    writeln!(
        w,
        "![RMSE over the CRB](evaluation-accuracy.svg)\n\nTwo random-phase lines 3/N apart (N = 33), \
         complex white Gaussian noise, σ and the number of lines given; {} draws per SNR. RMSE/√CRB is \
         √(mean (e/√CRB)²) over the found lines, with the per-line bound of the two-line model \
         (Stoica & Nehorai 1989, IEEE Trans. ASSP 37(5)); bars are chi-square 95 % intervals \
         (normal errors assumed: near the threshold the errors have outliers and the bars are too \
         narrow). Lines farther than 0.5/fc from the truth count as missed and do not enter the RMSE: \
         a low ratio with many misses is not efficiency. sdp, ast, sfw, greedy and grid all finish with \
         the crate's shared least-squares polish of positions and amplitudes on the exact model, so \
         when they start in the same basin they end at the same estimate and their rows coincide. \
         Threshold SNR: scanning from the top SNR \
         down, the last SNR before RMSE/√CRB first exceeds {BREAK_RATIO} or fewer than 90 % of the \
         lines are found.\n",
        r.crb.plan.draws
    )
    .ok();
    w.push_str(&snr_table(&r.crb));
}

/// The table of a study against SNR: per method its threshold SNR, then RMSE/√CRB and the share of
/// lines found at each SNR of the campaign's grid.
fn snr_table(c: &Campaign) -> String {
    let rows = crb_rows(c);
    let snrs: Vec<f64> = c.plan.grid.snr_db.iter().flatten().copied().collect();
    let mut head: Vec<String> = vec!["method".into(), "threshold SNR (dB)".into()];
    head.extend(snrs.iter().map(|s| format!("{s} dB")));
    let body: Vec<Vec<String>> = c
        .plan
        .methods
        .iter()
        .map(|m| {
            let mut row = vec![
                m.name.clone(),
                threshold_snr(&rows, &m.name).map_or("above the range".into(), |t| format!("{t}")),
            ];
            for s in &snrs {
                let c = rows.iter().find(|c| c.method == m.name && c.snr == *s);
                row.push(c.map_or("–".into(), |c| {
                    format!("{} ({:.0} % found)", fmt(c.ratio), 100.0 * c.found)
                }));
            }
            row
        })
        .collect();
    let head_ref: Vec<&str> = head.iter().map(String::as_str).collect();
    table(&head_ref, &body)
}

/// Resolution of two lines: figure and the 50 % separations.
pub fn resolution(md: &mut String, r: &Results) {
    let w = &mut *md;
    writeln!(w, "\n## Resolution of two lines\n").ok();
    writeln!(
        w,
        "![resolution probability](evaluation-resolution.svg)\n\nTwo random-phase lines (N = 33), \
         σ and the number of lines given; {} draws per point. Resolved: two lines found, nothing \
         spurious, each within half the separation of its true line. Bars: Wilson 95 % intervals \
         (Wilson 1927, J. Amer. Statist. Assoc. 22).\n",
        r.res.plan.draws
    )
    .ok();
    let res = resolution_rows(&r.res);
    let rsnrs: Vec<f64> = r.res.plan.grid.snr_db.iter().flatten().copied().collect();
    let mut head: Vec<String> = vec!["method".into()];
    head.extend(
        rsnrs
            .iter()
            .map(|s| format!("50 % resolved from (1/N), {s} dB")),
    );
    let rows: Vec<Vec<String>> = r
        .res
        .plan
        .methods
        .iter()
        .map(|m| {
            let mut row = vec![m.name.clone()];
            for s in &rsnrs {
                row.push(
                    half_separation(&res, &m.name, *s)
                        .map_or("not reached".into(), |x| format!("{x}")),
                );
            }
            row
        })
        .collect();
    let head_ref: Vec<&str> = head.iter().map(String::as_str).collect();
    w.push_str(&table(&head_ref, &rows));
}

/// Time and peak memory against N, with growth exponents.
pub fn cost(md: &mut String, r: &Results, mode: &Mode) {
    let w = &mut *md;
    writeln!(w, "\n## Time and peak memory against N\n").ok();
    writeln!(
        w,
        "![cost](evaluation-cost.svg)\n\nN time samples, 3 random-phase lines 3/N apart, 30 dB, σ \
         and the number of lines given. Each point is its own process (`evaluation cost-point \
         METHOD N`): the median wall time of up to three runs of the estimate (fewer when they take over \
         2 s), and the peak resident set (VmHWM) minus the resident \
         set just before the estimate. The times carry the noise of a shared machine. `sdp` and \
         `ast` switch from the interior point to Sliding Frank–Wolfe at fc = 25 (N ≈ 51): their drop \
         between N = 32 and N = 64 is that switch of solver, not a cheaper problem. A method is not run at larger N once it is refused or takes more than {} s. Growth \
         exponents: least-squares slope of log(time) and log(memory) against log N over the points \
         with N ≥ 64 (fewer than two such points: –). Memory increments of a few MB are fixed \
         allocations (buffers, plans) more than growth with N: over a short range of N their \
         exponents say little (the full mode runs to N = 2048).\n",
        mode.cost_limit_s
    )
    .ok();
    let mut rows = Vec::new();
    for m in crate::studies::all_methods() {
        let mine: Vec<&Point> = r.cost.iter().filter(|p| p.method == m).collect();
        let t: Vec<(usize, f64)> = mine
            .iter()
            .filter_map(|p| Some((p.n, p.seconds?)))
            .collect();
        let mem: Vec<(usize, f64)> = mine
            .iter()
            .filter_map(|p| Some((p.n, p.peak_mb? - p.base_mb?)))
            .filter(|p| p.1 > 0.5)
            .collect();
        let last = mine.last();
        rows.push(vec![
            m.to_string(),
            t.iter()
                .map(|(n, s)| format!("{n}: {s:.3}"))
                .collect::<Vec<_>>()
                .join(", "),
            fmt(exponent(&t)),
            mine.iter()
                .filter_map(|p| Some(format!("{}: {:.1}", p.n, p.peak_mb?)))
                .collect::<Vec<_>>()
                .join(", "),
            fmt(exponent(&mem)),
            last.map_or("–".into(), |p| p.status.clone()),
        ]);
    }
    w.push_str(&table(
        &[
            "method",
            "seconds by N",
            "time exponent",
            "peak MB by N",
            "memory exponent",
            "last status",
        ],
        &rows,
    ));
}

/// How to read the numbers.
pub fn reading(md: &mut String) {
    let w = &mut *md;
    writeln!(w, "\n## Reading these numbers\n").ok();
    writeln!(
        w,
        "- Exact recovery rates are at a 10⁻³/N tolerance; a method that is close but not exact \
         (e.g. grid's refined positions, or an interior point stopped at reduced accuracy) fails it.\n\
         - Timings inside the campaigns ran side by side on all cores and are not used here; the cost \
         section uses one process per point.\n\
         - The per-trial records of any campaign are `finespike compare --plan PLAN --out trials.csv` \
         (one row per trial × true line; loads with pandas.read_csv)."
    )
    .ok();
}

/// Array snapshots: the coherent pair against SNR.
pub fn arrays(md: &mut String, r: &Results) {
    use crate::studies::{ARRAY_SENSORS, ARRAY_SEPARATION, ARRAY_SNAPSHOTS};
    let w = &mut *md;
    writeln!(w, "\n## Array snapshots: a coherent pair\n").ok();
    writeln!(
        w,
        "![array accuracy](evaluation-arrays.svg)\n\nA uniform line array of M = {ARRAY_SENSORS} \
         sensors at half-wavelength spacing, L = {ARRAY_SNAPSHOTS} snapshots, two sources \
         {ARRAY_SEPARATION}/M apart (about 9.6° near broadside) that are coherent (one a fixed-phase \
         copy of the other, as in multipath: the source covariance has rank one), complex white \
         Gaussian noise at the SNR of each source; σ and the number of sources given; {} draws per \
         SNR. sdp runs the joint (group atomic norm) problem on all snapshots; MUSIC and ESPRIT run \
         on the sample covariance with forward–backward averaging and spatial smoothing, which coherent \
         sources need. RMSE/√CRB uses the deterministic (conditional) bound of the drawn amplitudes \
         (Stoica & Nehorai 1989, IEEE Trans. ASSP 37(5)); bars are chi-square 95 % intervals; sources \
         farther than 0.5/fc from the truth count as missed.\n",
        r.arrays.plan.draws
    )
    .ok();
    w.push_str(&snr_table(&r.arrays));
}

/// What this run cost, study by study, and the projected cost of the full mode.
pub fn spent(md: &mut String, r: &Results, mode: &Mode) {
    let w = &mut *md;
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    writeln!(w, "\n## What this run cost\n").ok();
    writeln!(
        w,
        "Wall and CPU seconds of each campaign in this run ({} mode, {cores} cores; the wall time \
         depends on what else the machine was running, the CPU time much less). The last column \
         projects the full mode on {cores} idle cores: this run's CPU seconds per trial times the \
         full mode's trials, divided by the cores — a projection, not a measurement (the full \
         grids reach a little further in separation and spike count).\n",
        mode.name
    )
    .ok();
    let mut total = 0.0;
    let body: Vec<Vec<String>> = r
        .spent
        .iter()
        .map(|s| {
            let full = s
                .cpu_s
                .map(|c| c / s.trials.max(1) as f64 * s.full_trials as f64 / cores as f64);
            total += full.unwrap_or(0.0);
            vec![
                s.study.to_string(),
                format!("{:.0}", s.wall_s),
                s.cpu_s.map_or("–".into(), |c| format!("{c:.0}")),
                s.trials.to_string(),
                s.full_trials.to_string(),
                full.map_or("–".into(), |f| format!("{:.1}", f / 60.0)),
            ]
        })
        .collect();
    w.push_str(&table(
        &[
            "study",
            "wall s",
            "CPU s",
            "trials",
            "full-mode trials",
            "full mode, projected min",
        ],
        &body,
    ));
    writeln!(
        w,
        "\nProjected full mode, campaigns: about {:.0} min on {cores} idle cores; the cost study \
         adds its points (each method stops at the first N over {} s).",
        total / 60.0,
        Mode::full_cost_limit()
    )
    .ok();
}
