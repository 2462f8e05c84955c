//! The numbers behind the accuracy and resolution figures: rows by method and condition, the
//! threshold SNR and the separation from which half the pairs are resolved.

use finespike::eval::campaign::Campaign;

/// RMSE/√CRB above this counts as broken away from the bound (our threshold, common practice is
/// 1.5–2).
pub const BREAK_RATIO: f64 = 1.5;
/// Fewer lines found than this fraction also counts as broken away.
pub const BREAK_FOUND: f64 = 0.9;

/// One point of the accuracy figure.
pub struct CrbRow {
    pub method: String,
    pub snr: f64,
    pub ratio: Option<f64>,
    pub ci: Option<(f64, f64)>,
    pub found: f64,
}

/// The accuracy study by method and SNR.
pub fn crb_rows(c: &Campaign) -> Vec<CrbRow> {
    c.summaries()
        .into_iter()
        .map(|s| CrbRow {
            snr: s.condition.snr_db.unwrap_or(f64::INFINITY),
            ratio: s.rmse_over_crb,
            ci: s.rmse_over_crb_ci,
            found: s.lines_found as f64 / s.lines.max(1) as f64,
            method: s.method,
        })
        .collect()
}

/// The threshold SNR of `method`: scanning from the highest SNR down, the lowest SNR reached before
/// the first point with RMSE/√CRB > [`BREAK_RATIO`] or fewer than [`BREAK_FOUND`] of the lines
/// found. `None` when already the highest SNR is broken.
pub fn threshold_snr(rows: &[CrbRow], method: &str) -> Option<f64> {
    let mut mine: Vec<&CrbRow> = rows.iter().filter(|r| r.method == method).collect();
    mine.sort_by(|a, b| b.snr.total_cmp(&a.snr));
    let mut last = None;
    for r in mine {
        let ok = r.found >= BREAK_FOUND && r.ratio.is_some_and(|x| x <= BREAK_RATIO);
        if !ok {
            break;
        }
        last = Some(r.snr);
    }
    last
}

/// One point of the resolution figure.
pub struct ResRow {
    pub method: String,
    pub snr: f64,
    pub separation: f64,
    pub rate: f64,
    pub ci: (f64, f64),
}

/// The resolution study by method, SNR and separation.
pub fn resolution_rows(c: &Campaign) -> Vec<ResRow> {
    c.summaries()
        .into_iter()
        .map(|s| ResRow {
            snr: s.condition.snr_db.unwrap_or(f64::INFINITY),
            separation: s.condition.separation_res,
            rate: s.resolved_rate,
            ci: s.resolved_ci,
            method: s.method,
        })
        .collect()
}

/// The smallest separation from which on (every larger one too) `method` resolves at least half
/// the pairs at `snr`.
pub fn half_separation(rows: &[ResRow], method: &str, snr: f64) -> Option<f64> {
    let mut mine: Vec<&ResRow> = rows
        .iter()
        .filter(|r| r.method == method && r.snr == snr)
        .collect();
    mine.sort_by(|a, b| b.separation.total_cmp(&a.separation));
    let mut last = None;
    for r in mine {
        if r.rate < 0.5 {
            break;
        }
        last = Some(r.separation);
    }
    last
}
