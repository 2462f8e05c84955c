//! `compare --plan`: a benchmark campaign described by a JSON plan (see
//! `finespike::eval::campaign` for the layout), run in parallel on all cores; per-trial records to
//! `--out` (CSV, or JSON Lines when the name ends in `.jsonl`), a per-condition summary on stdout.

use crate::show::num;
use crate::{Failure, ReportFormat};
use finespike::eval::campaign::{correlation_name, run, Campaign, ConditionSummary, Plan};
use indicatif::{ProgressBar, ProgressStyle};
use std::io::IsTerminal;
use std::path::Path;

/// Read and check the plan file.
fn read_plan(path: &Path) -> Result<Plan, Failure> {
    let text = finespike::eval::io::read_file_text(path).map_err(Failure::Input)?;
    // Malformed JSON and invalid settings alike are a bad input file (exit 3); the message names
    // the file (and the line for malformed JSON).
    Plan::from_json(&text, &path.display().to_string()).map_err(|e| match e {
        finespike::Error::Parse { .. } => Failure::Input(e),
        other => Failure::Input(finespike::Error::Parse {
            source_name: path.display().to_string(),
            line: 0,
            message: other.to_string(),
        }),
    })
}

/// A bar on stderr when it is a terminal, hidden otherwise.
fn bar(total: usize) -> ProgressBar {
    if !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(total as u64);
    if let Ok(style) =
        ProgressStyle::with_template("{wide_bar} {pos}/{len} trials, {elapsed} (left {eta})")
    {
        bar.set_style(style);
    }
    bar
}

/// Write the records to `out`: JSON Lines for a `.jsonl` name, CSV otherwise.
fn write_records(campaign: &Campaign, out: &Path) -> Result<(), Failure> {
    let file = std::fs::File::create(out)
        .map_err(|e| Failure::Output(format!("cannot create {}: {e}", out.display())))?;
    let w = std::io::BufWriter::new(file);
    let jsonl = out.extension().is_some_and(|e| e == "jsonl");
    let written = if jsonl {
        campaign.write_jsonl(w)
    } else {
        campaign.write_csv(w)
    };
    written.map_err(|e| Failure::Output(format!("cannot write {}: {e}", out.display())))
}

fn interval(v: Option<f64>, ci: Option<(f64, f64)>) -> String {
    match (v, ci) {
        (Some(v), Some((lo, hi))) => format!("{} [{}, {}]", num(v), num(lo), num(hi)),
        (Some(v), None) => num(v),
        _ => "-".into(),
    }
}

fn text_row(s: &ConditionSummary) -> String {
    let c = &s.condition;
    let snr = c.snr_db.map_or("exact".to_string(), |v| format!("{v} dB"));
    // An array is described by its sensors, snapshots and source relation; its resolution is 1/M.
    let (record, unit) = match c.band.snapshots() {
        Some(l) => (
            format!(
                "M={} L={} {}",
                c.band.len(),
                l,
                correlation_name(c.correlation)
            ),
            "M",
        ),
        None => (format!("N={:<5}", c.band.len()), "N"),
    };
    format!(
        "{:>4}  {:<10} {record} s={:<3} Δ={}/{unit} ({}/fc)  {:<8} {:<16} gaps {}  success {}/{} [{:.2}, {:.2}]  resolved {}/{}  RMSE/√CRB {}  median {} s{}",
        c.index,
        s.method,
        c.spikes,
        num(c.separation_res),
        num(c.separation_fc),
        snr,
        c.amplitudes.name(),
        c.gaps,
        s.successes,
        s.trials,
        s.success_ci.0,
        s.success_ci.1,
        s.resolved,
        s.trials,
        interval(s.rmse_over_crb, s.rmse_over_crb_ci),
        num(s.median_seconds),
        if s.refused > 0 {
            format!("  refused {}", s.refused)
        } else {
            String::new()
        }
    )
}

/// Run the plan at `plan`, write the records to `out`, print the summaries.
pub(crate) fn run_plan(plan: &Path, out: &Path, format: ReportFormat) -> Result<(), Failure> {
    let plan = read_plan(plan)?;
    let (conditions, _) = plan.conditions();
    let total = conditions.len() * plan.draws * plan.methods.len();
    let progress = bar(total);
    let campaign = run(&plan, &|done, _| progress.set_position(done as u64))
        .map_err(|e| Failure::Usage(e.to_string()))?;
    progress.finish_and_clear();
    write_records(&campaign, out)?;
    for note in &campaign.skipped {
        eprintln!("note: left out: {note}");
    }
    let summaries = campaign.summaries();
    let text = match format {
        ReportFormat::Json => {
            serde_json::to_string_pretty(&summaries).map_err(|e| Failure::Output(e.to_string()))?
        }
        ReportFormat::Csv => {
            let mut buf = Vec::new();
            campaign
                .write_summary_csv(&mut buf)
                .map_err(|e| Failure::Output(e.to_string()))?;
            String::from_utf8_lossy(&buf).into_owned()
        }
        ReportFormat::Text => {
            let mut t = format!(
                "{} trials ({} conditions × {} draws × {} methods), records in {}\n\
                 success: nothing missed or spurious (gate 0.5/fc), usable status, and on exact data \
                 every line within {}/N; rates with Wilson 95 % intervals; RMSE/√CRB with a \
                 chi-square 95 % interval\n",
                campaign.trials.len(),
                campaign.conditions.len(),
                plan.draws,
                plan.methods.len(),
                out.display(),
                num(plan.exact_tolerance)
            );
            for s in &summaries {
                t.push_str(&text_row(s));
                t.push('\n');
            }
            t
        }
    };
    crate::emit(&text)?;
    Ok(())
}
