//! Numbers and bands as people write them: `0.0185`, `9.217`, `16`, `2.5e-7`, "N = 64 time samples".
//!
//! Text reports use [`num`] (4 significant digits) or [`sig`]; machine-readable CSV uses [`exact`],
//! which keeps every digit of the `f64` (it reads back to the same number), in the files this tool
//! writes ([`samples_csv`], [`lines_csv`]) as in its reports.

use finespike::{Domain, Line, Measurements, Scale};

/// Fixed notation is used for magnitudes in `[SMALL, LARGE)`, an exponent outside (the switch to an
/// exponent below 1e-4 is that of C's `%g`, common practice).
const SMALL: f64 = 1e-4;
const LARGE: f64 = 1e6;

/// `x` with 4 significant digits (see [`sig`]).
pub fn num(x: f64) -> String {
    sig(x, 4)
}

/// `x` with `digits` significant digits: fixed notation from 0.0001 up to a million, an exponent
/// (`2.5e-7`, `3.1e8`) outside; trailing zeros dropped, so integers print without a decimal point
/// (`16`, not `16.0`).
pub fn sig(x: f64, digits: usize) -> String {
    let digits = digits.max(1);
    if !x.is_finite() {
        return x.to_string();
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let a = x.abs();
    if (SMALL..LARGE).contains(&a) {
        // Decimals so that `digits` significant digits show (none for large numbers).
        let magnitude = a.log10().floor() as i64;
        let decimals = (digits as i64 - 1 - magnitude).max(0) as usize;
        let text = format!("{x:.decimals$}");
        // Rounding can carry into a new leading digit (0.99995 → 1.0000): trimming handles it.
        trim_zeros(&text)
    } else {
        let text = format!("{x:.prec$e}", prec = digits - 1);
        match text.split_once('e') {
            Some((mantissa, exponent)) => format!("{}e{exponent}", trim_zeros(mantissa)),
            None => text,
        }
    }
}

pub use finespike::eval::io::exact;

/// Drop trailing zeros after a decimal point, and the point itself when nothing follows it.
fn trim_zeros(text: &str) -> String {
    if !text.contains('.') {
        return text.to_string();
    }
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The first line of an estimate's summary: "METHOD: STATUS (SOLVER, after N iterations, relative
/// duality gap G) in T s".
pub fn headline(
    method: &str,
    status: finespike::Status,
    solver: Option<&str>,
    iterations: usize,
    duality_gap: Option<f64>,
    seconds: f64,
) -> String {
    let mut steps = match iterations {
        0 => "direct method, no iterations".to_string(),
        1 => "after 1 iteration".to_string(),
        n => format!("after {n} iterations"),
    };
    if let Some(gap) = duality_gap {
        steps = format!("{steps}, relative duality gap {}", sig(gap, 2));
    }
    if let Some(solver) = solver {
        steps = format!("{solver}, {steps}");
    }
    format!("{method}: {status} ({steps}) in {} s\n", sig(seconds, 3))
}

/// A text table: the header `head` and the `rows`, each column right-aligned to its widest cell,
/// columns two spaces apart, one line per row.
pub fn table(head: &[&str], rows: &[Vec<String>]) -> String {
    let mut widths: Vec<usize> = head.iter().map(|h| h.chars().count()).collect();
    for r in rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let line = |cells: &mut dyn Iterator<Item = &str>| -> String {
        cells
            .zip(&widths)
            .map(|(c, w)| format!("{}{c}", " ".repeat(w.saturating_sub(c.chars().count()))))
            .collect::<Vec<_>>()
            .join("  ")
            + "\n"
    };
    let mut out = line(&mut head.iter().copied());
    for r in rows {
        out.push_str(&line(&mut r.iter().map(String::as_str)));
    }
    out
}

/// How the measured set is described: "33 coefficients, fc = 16" (a Fourier band, or "17 of the 33
/// coefficients of the band, fc = 16" with gaps) or "N = 64 time samples (n = 0..63)" (a time record,
/// whose length says more than its fc = (N − 1)/2, which is fractional for even N; "497 of N = 512
/// time samples (n = 1000..1511)" with gaps), followed by the record's resolution 1/N in its unit
/// ("resolution 1/N = 1.953 Hz").
pub fn band(data: &Measurements) -> String {
    let (first, last) = data.user_span();
    let what = match data.domain() {
        Domain::Fourier if data.is_full_band() => {
            format!("{} coefficients, fc = {}", data.len(), num(data.fc()))
        }
        Domain::Fourier => format!(
            "{} of the {} coefficients of the band, fc = {}",
            data.len(),
            data.band_len(),
            num(data.fc())
        ),
        Domain::Time if data.is_full_band() => {
            format!("N = {} time samples (n = {first}..{last})", data.len())
        }
        Domain::Time => format!(
            "{} of N = {} time samples (n = {first}..{last})",
            data.len(),
            data.band_len()
        ),
    };
    let kind = if data.is_real() { ", real-valued" } else { "" };
    format!("{what}{kind}, resolution {}", resolution(data))
}

/// The unit positions are reported in: `Hz` for a time record with a sample rate, `cycles/sample`
/// without one; for Fourier data "" (a fraction of the domain, or the unit of its length).
pub fn unit(data: &Measurements) -> &'static str {
    match (data.domain(), data.scale()) {
        (Domain::Time, Some(Scale::SampleRate(_))) => "Hz",
        (Domain::Time, _) => "cycles/sample",
        _ => "",
    }
}

/// `x` followed by the record's unit ("123.4 Hz", "0.25 cycles/sample", "0.25").
pub fn with_unit(x: &str, data: &Measurements) -> String {
    match unit(data) {
        "" => x.to_string(),
        u => format!("{x} {u}"),
    }
}

/// The record's resolution in its unit: "1/N = 1.953 Hz" (`R/N` with a rate), "1/N = 0.01562
/// cycles/sample", "L/N = 0.2" for Fourier data with a domain length.
pub fn resolution(data: &Measurements) -> String {
    let name = match data.scale() {
        Some(Scale::DomainLength(_)) => "L/N",
        _ => "1/N",
    };
    format!("{name} = {}", with_unit(&num(data.resolution()), data))
}

/// The factor from cycles per sample (or fractions of the domain) to the record's unit.
pub fn factor(data: &Measurements) -> f64 {
    data.scale().map_or(1.0, Scale::factor)
}

/// A line's position in the record's unit: its frequency for a time record (Hz with a rate), its
/// location for Fourier data with a length, else its position.
pub fn line_value(line: &Line) -> f64 {
    line.frequency.or(line.location).unwrap_or(line.position)
}

/// A line's Cramér–Rao standard deviation in the record's unit, when known.
pub fn line_crb(line: &Line, data: &Measurements) -> Option<f64> {
    line.crb_std_position.map(|s| s * factor(data))
}

/// A line's phase in degrees.
pub fn phase_deg(line: &Line) -> f64 {
    line.amplitude.arg().to_degrees()
}

/// The lines of an estimate as CSV: `position,frequency,re,im,abs_amplitude,phase_deg,crb_std`
/// (`location` in place of `frequency` for Fourier data), every value in full; `crb_std` in the
/// record's unit and empty when no bound is known.
pub fn lines_csv(lines: &[Line], data: &Measurements) -> String {
    let second = match data.domain() {
        Domain::Time => "frequency",
        Domain::Fourier => "location",
    };
    let mut out = format!("position,{second},re,im,abs_amplitude,phase_deg,crb_std\n");
    for l in lines {
        out.push_str(&format!(
            "{},{},{},{},{},{},{}\n",
            exact(l.position),
            exact(line_value(l)),
            exact(l.amplitude.re),
            exact(l.amplitude.im),
            exact(l.amplitude.norm()),
            exact(phase_deg(l)),
            line_crb(l, data).map_or_else(String::new, exact)
        ));
    }
    out
}

/// Measurements as a sample file: `k,re,im` (Fourier coefficients, by k), `n,re,im` (time samples,
/// by n) or `n,value` (a real record), every value in full ([`exact`]): the library's writer.
pub fn samples_csv(data: &Measurements) -> String {
    finespike::eval::io::samples_to_csv(data)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_as_written() {
        // (value, 4 significant digits).
        for (x, want) in [
            (0.0, "0"),
            (16.0, "16"),
            (-3.0, "-3"),
            (31.5, "31.5"),
            (2.38, "2.38"),
            (9.217_312, "9.217"),
            (0.018_500_7, "0.0185"),
            (0.001_234_56, "0.001235"),
            (0.000_919_1, "0.0009191"),
            (0.000_123_44, "0.0001234"),
            (5.745e-5, "5.745e-5"),
            (0.999_99, "1"),
            (123_456.7, "123457"),
            (2.5e-7, "2.5e-7"),
            (-1.234_56e-5, "-1.235e-5"),
            (3.1e8, "3.1e8"),
            (1e6, "1e6"),
        ] {
            assert_eq!(num(x), want, "{x}");
        }
        assert_eq!(sig(0.272_497_1, 6), "0.272497");
        assert_eq!(sig(f64::NAN, 4), "NaN");
    }

    #[test]
    fn exact_reads_back_to_the_same_number() {
        for x in [
            0.0,
            16.0,
            2.38,
            0.018_500_702_463_943_44,
            1e-9,
            3.3e20,
            -7.25e-5,
            1e15,
        ] {
            let text = exact(x);
            assert_eq!(text.parse::<f64>().unwrap(), x, "{text}");
            assert!(text.len() < 26, "{text}");
        }
        assert_eq!(exact(2.38), "2.38");
        assert_eq!(exact(16.0), "16");
        assert_eq!(exact(2.5e-7), "2.5e-7");
    }

    #[test]
    fn bands_are_described_by_fc_or_by_length() {
        let y = vec![num_complex::Complex64::new(1.0, 0.0); 64];
        let record = Measurements::from_time_samples(&y).unwrap();
        assert_eq!(
            band(&record),
            "N = 64 time samples (n = 0..63), resolution 1/N = 0.01562 cycles/sample"
        );
        let x: Vec<f64> = (0..512).map(|n| (0.3 * n as f64).cos()).collect();
        let t: Vec<i64> = (1000..1512).collect();
        let real = Measurements::from_real_subset(&t, &x)
            .unwrap()
            .with_scale(finespike::Scale::SampleRate(1000.0))
            .unwrap();
        assert_eq!(
            band(&real),
            "N = 512 time samples (n = 1000..1511), real-valued, resolution 1/N = 1.953 Hz"
        );
        let k: Vec<i64> = (-16..=16).collect();
        let y = vec![num_complex::Complex64::new(1.0, 0.0); 33];
        let full = Measurements::in_band(-16, 16, &k, &y, Domain::Fourier).unwrap();
        assert_eq!(
            band(&full),
            "33 coefficients, fc = 16, resolution 1/N = 0.0303"
        );
    }

    #[test]
    fn written_sample_files_read_back_exactly() {
        use num_complex::Complex64;
        // x_n of one line at 0.2 cycles per sample with values of every magnitude.
        let y: Vec<Complex64> = (0..6)
            .map(|n| {
                Complex64::from_polar(10f64.powi(n - 3), 0.4 * std::f64::consts::PI * n as f64)
            })
            .collect();
        let record = Measurements::from_time_samples(&y).unwrap();
        let text = samples_csv(&record);
        assert!(text.starts_with("n,re,im\n0,0.001,0\n1,"), "{text}");
        let rows = finespike::eval::io::parse_samples(&text, "written").unwrap();
        let back = rows.into_measurements(None).unwrap();
        assert_eq!(back.indices(), record.indices());
        assert_eq!(back.values(), record.values());
        assert!(!text.contains("e0,") && !text.contains("e0\n"), "{text}");
    }
}
