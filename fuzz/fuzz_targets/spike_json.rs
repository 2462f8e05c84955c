//! The spike JSON reader on arbitrary bytes: `Ok` or a typed error, never a panic; what it accepts
//! is finite, sorted, on [0, 1), and writes back to a file that reads back.
#![no_main]

use finespike::eval::io::parse_spikes_json;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|bytes: &[u8]| {
    let Ok(text) = std::str::from_utf8(bytes) else {
        return;
    };
    let Ok(file) = parse_spikes_json(text, "fuzz.json") else {
        return;
    };
    let positions = file.spikes.positions();
    assert!(positions.iter().all(|p| (0.0..1.0).contains(p)));
    assert!(positions.windows(2).all(|w| w[0] <= w[1]));
    assert!(file
        .spikes
        .amplitudes()
        .iter()
        .all(|a| a.re.is_finite() && a.im.is_finite()));
    let written = serde_json::to_string(&file).expect("a spike file serialises");
    let again = parse_spikes_json(&written, "again.json").expect("written file reads back");
    assert_eq!(again.spikes.len(), file.spikes.len());
});
