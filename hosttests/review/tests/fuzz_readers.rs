//! Stable fuzz harnesses (proptest-driven) of the review tool's TOML and CSV readers on
//! arbitrary and mutated text: every outcome is a configuration, samples, or an error that
//! names the file.
//!
//! The default run is a short smoke run. A longer campaign sets the number of cases:
//!
//! ```text
//! FUZZ_CASES=1000000 cargo test -p photon-review --release --test fuzz_readers -- --nocapture
//! ```
//!
//! The checks are against the tool's own documented contract (errors name the file), not
//! against outside reference values; the mutated texts are invented test data.

use photon_review::config::{self as review_config, ReviewConfig};
use photon_review::samples::SampleReader;
use proptest::prelude::*;

use hosttests::fuzzing::fuzz;

// ---------------------------------------------------------------------------------------
// (d) Review tool readers.
// ---------------------------------------------------------------------------------------

const EXAMPLE_TOML: &str = include_str!("../examples/photoreactor.toml");
const EXAMPLE_CSV: &str = include_str!("../examples/photoreactor.csv");

fn example_config() -> ReviewConfig {
    review_config::parse("photoreactor.toml", EXAMPLE_TOML.as_bytes()).unwrap()
}

fn mutate_text(base: &str, edits: &[(usize, usize, String)]) -> Vec<u8> {
    let mut b = base.as_bytes().to_vec();
    for (at, del, ins) in edits {
        let at = at % (b.len() + 1);
        let end = (at + del).min(b.len());
        b.splice(at..end, ins.bytes());
    }
    b
}

fn edits() -> impl Strategy<Value = Vec<(usize, usize, String)>> {
    proptest::collection::vec(
        (
            any::<usize>(),
            0usize..12,
            prop_oneof![
                "[ -~]{0,6}",
                Just("nan".to_string()),
                Just("-1e999".to_string()),
                Just("\n".to_string()),
                Just("=".to_string()),
                Just(",".to_string()),
                Just("[[ranges]]\n".to_string()),
                "\\PC{0,3}",
            ],
        ),
        1..6,
    )
}

fn review_error_named(
    e: &photon_review::error::ReviewError,
    file: &str,
) -> Result<(), TestCaseError> {
    let place = e
        .place()
        .ok_or_else(|| TestCaseError::fail(format!("error without a place: {e}")))?;
    prop_assert_eq!(place.file.as_str(), file);
    prop_assert!(e.to_string().contains(file), "{}", e);
    Ok(())
}

#[test]
fn fuzz_review_toml_reader() {
    let s = prop_oneof![
        proptest::collection::vec(any::<u8>(), 0..300),
        edits().prop_map(|e| mutate_text(EXAMPLE_TOML, &e)),
    ];
    fuzz("review/toml", 1000, s, |bytes| {
        match review_config::parse("fuzz.toml", &bytes) {
            Ok(_) => {}
            Err(e) => review_error_named(&e, "fuzz.toml")?,
        }
        Ok(())
    });
}

#[test]
fn fuzz_review_csv_reader() {
    let config = example_config();
    let s = prop_oneof![
        proptest::collection::vec(any::<u8>(), 0..300),
        edits().prop_map(|e| mutate_text(&EXAMPLE_CSV[..EXAMPLE_CSV.len().min(600)], &e)),
    ];
    fuzz("review/csv", 1000, s, |bytes| {
        let mut reader = match SampleReader::new("fuzz.csv", bytes.as_slice(), &config) {
            Ok(r) => r,
            Err(e) => return review_error_named(&e, "fuzz.csv"),
        };
        let mut n = 0u64;
        loop {
            match reader.next_sample() {
                Ok(Some(_)) => n += 1,
                Ok(None) => break,
                Err(e) => return review_error_named(&e, "fuzz.csv"),
            }
            prop_assert!(n <= 1000, "reader does not end");
        }
        Ok(())
    });
}
