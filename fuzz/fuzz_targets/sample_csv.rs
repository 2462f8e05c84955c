//! The sample CSV reader on arbitrary bytes: `Ok` or a typed error, never a panic; what it accepts
//! writes back and reads back to the same measurements.
#![no_main]

use finespike::eval::io::{parse_samples, samples_to_csv};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|bytes: &[u8]| {
    // The first byte, when present, is a cutoff to read Fourier files with (0: inferred).
    let (fc, text) = match bytes.split_first() {
        Some((&b, rest)) => (usize::from(b % 40), rest),
        None => (0, bytes),
    };
    let Ok(text) = std::str::from_utf8(text) else {
        return;
    };
    let Ok(rows) = parse_samples(text, "fuzz.csv") else {
        return;
    };
    let fc = (fc > 0).then_some(fc);
    let Ok(data) = rows.into_measurements(fc) else {
        return;
    };
    // Fourier data sit in the band −fc..=fc (fc given or inferred), so kmax is the cutoff to read
    // the written file with; time data need none.
    let fc_back = match data.domain() {
        finespike::Domain::Fourier => Some(data.kmax() as usize),
        finespike::Domain::Time => None,
    };
    let again = parse_samples(&samples_to_csv(&data), "again.csv")
        .expect("written samples read back")
        .into_measurements(fc_back)
        .expect("written samples are valid");
    assert_eq!(again, data);
});
