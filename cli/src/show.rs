//! Numbers and bands as people write them: `0.0185`, `9.217`, `16`, `2.5e-7`, "N = 64 time samples".
//!
//! Text reports use [`num`] (4 significant digits) or [`sig`]; machine-readable CSV uses [`exact`],
//! which keeps every digit of the `f64` (it reads back to the same number), in the files this tool
//! writes ([`samples_csv`], [`spikes_csv`]) as in its reports.

use finespike::{Domain, Measurements, Spikes};

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

/// How the measured set is described: "33 coefficients, fc = 16" (a Fourier band, or "17 of the 33
/// coefficients of the band, fc = 16" with gaps) or "N = 64 time samples" (a time record, whose length
/// says more than its fc = (N − 1)/2, which is fractional for even N).
pub fn band(data: &Measurements) -> String {
    match data.domain() {
        Domain::Fourier if data.is_full_band() => {
            format!("{} coefficients, fc = {}", data.len(), num(data.fc()))
        }
        Domain::Fourier => format!(
            "{} of the {} coefficients of the band, fc = {}",
            data.len(),
            data.band_len(),
            num(data.fc())
        ),
        Domain::Time if data.is_full_band() => format!("N = {} time samples", data.len()),
        Domain::Time => format!("{} of N = {} time samples", data.len(), data.band_len()),
    }
}

/// Measurements as a sample file: `k,re,im` (Fourier coefficients, by k) or `n,re,im` (time samples,
/// by n), every value in full ([`exact`]): the library's writer.
pub fn samples_csv(data: &Measurements) -> String {
    finespike::eval::io::samples_to_csv(data)
}

/// Spikes as CSV `position,re,im`, every value in full ([`exact`]): the library's writer.
pub fn spikes_csv(spikes: &Spikes) -> String {
    finespike::eval::io::spikes_to_csv(spikes)
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
        assert_eq!(band(&record), "N = 64 time samples");
        let k: Vec<i64> = (-16..=16).collect();
        let y = vec![num_complex::Complex64::new(1.0, 0.0); 33];
        let full = Measurements::in_band(-16, 16, &k, &y, Domain::Fourier).unwrap();
        assert_eq!(band(&full), "33 coefficients, fc = 16");
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
