//! Physically absurd configuration values are refused with the key, its place and the sane
//! range in the message; a tolerance of 0 is refused with the reason instead of turning every
//! run `overexposed`.
//!
//! The ranges checked are the tool's own documented engineering ranges (`config::RANGES`,
//! CONFIG.md section 1: common practice, no source); the base configuration is the shipped
//! example (invented demonstration values).

use std::path::Path;

use photon_review::config;

fn example() -> String {
    std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/photoreactor.toml"),
    )
    .unwrap()
}

/// The example with the line starting `key =` replaced by `key = value`.
fn with(key: &str, value: &str) -> String {
    let text = example();
    let mut found = false;
    let out: Vec<String> = text
        .lines()
        .map(|l| {
            if !found && l.trim_start().starts_with(&format!("{key} =")) {
                found = true;
                format!("{key} = {value}")
            } else {
                l.to_string()
            }
        })
        .collect();
    assert!(found, "{key} not in the example");
    out.join("\n")
}

fn error_of(text: &str) -> String {
    match config::parse("c.toml", text.as_bytes()) {
        Ok(_) => panic!("accepted:\n{text}"),
        Err(e) => e.to_string(),
    }
}

#[test]
fn the_example_is_inside_every_range() {
    config::parse("c.toml", example().as_bytes()).unwrap();
}

#[test]
fn absurd_values_are_refused_with_the_sane_range() {
    for (key, value, field, range) in [
        (
            "active_area_mm2",
            "1e-300",
            "calibration.active_area_mm2",
            "1e-4 ..= 10000 mm²",
        ),
        (
            "active_area_mm2",
            "5e6",
            "calibration.active_area_mm2",
            "1e-4 ..= 10000 mm²",
        ),
        ("reference_v", "1e308", "adc.reference_v", "0.1 ..= 100 V"),
        ("reference_v", "0.001", "adc.reference_v", "0.1 ..= 100 V"),
        (
            "responsivity_a_per_w",
            "1e9",
            "calibration.responsivity_a_per_w",
            "1e-6 ..= 1000 A/W",
        ),
        (
            "sample_area_cm2",
            "1e-30",
            "session.sample_area_cm2",
            "1e-6 ..= 1e6 cm²",
        ),
        (
            "transimpedance_ohm",
            "1e15",
            "ranges[0].transimpedance_ohm",
            "1 ..= 1e12 Ω",
        ),
        (
            "transimpedance_ohm",
            "1e-3",
            "ranges[0].transimpedance_ohm",
            "1 ..= 1e12 Ω",
        ),
    ] {
        let e = error_of(&with(key, value));
        assert!(e.contains(&format!("({field})")), "{key} = {value}: {e}");
        assert!(e.contains(range), "{key} = {value}: {e}");
        assert!(e.contains("line "), "{key} = {value}: {e}");
    }
    let e = error_of(&with("reference_v", "3.3\npga_gain = 1e6"));
    assert!(
        e.contains("(adc.pga_gain)") && e.contains("0.01 ..= 1000"),
        "{e}"
    );
}

#[test]
fn a_tolerance_of_zero_is_refused_with_the_reason() {
    for tol in [
        "{ photons_umol = 0.0 }",
        "{ radiant_exposure_j_per_m2 = 0 }",
    ] {
        let e = error_of(&with("tolerance", tol));
        assert!(e.contains("session.tolerance"), "{e}");
        assert!(e.contains("must be > 0"), "{e}");
        assert!(e.contains("overexposure"), "{e}");
    }
}

/// Every sample of `csv` read with `config`, or the error's text.
fn samples(config: &config::ReviewConfig, csv: &str) -> Result<Vec<String>, String> {
    let mut r = photon_review::samples::SampleReader::new("s.csv", csv.as_bytes(), config)
        .map_err(|e| e.to_string())?;
    let mut out = Vec::new();
    while let Some(s) = r.next_sample().map_err(|e| e.to_string())? {
        out.push(format!("{:?}", s.reading));
    }
    Ok(out)
}

#[test]
fn declared_extra_columns_are_accepted_and_not_read() {
    let plain = "time_s,adc_code,range\n0.1,100,0\n0.2,120,0\n0.3,130,1\n";
    let extra = "time_s,humidity_pct,adc_code,operator,range\n\
                 0.1,40,100,a,0\n0.2,41,120,b,0\n0.3,x,130,c,1\n";
    let undeclared = config::parse("c.toml", example().as_bytes()).unwrap();
    let e = samples(&undeclared, extra).unwrap_err();
    assert!(e.contains("unknown column `humidity_pct`"), "{e}");
    assert!(e.contains("[samples] extra_columns"), "{e}");
    let declared = example() + "\n[samples]\nextra_columns = [\"humidity_pct\", \"operator\"]\n";
    let declared = config::parse("c.toml", declared.as_bytes()).unwrap();
    let want = samples(&undeclared, plain).unwrap();
    assert_eq!(want.len(), 3);
    assert_eq!(samples(&declared, extra).unwrap(), want);
    // A declared name that the reader knows, or named twice, is refused.
    for bad in ["[\"range\"]", "[\"a\", \"a\"]", "[\"\"]"] {
        let text = example() + &format!("\n[samples]\nextra_columns = {bad}\n");
        let e = error_of(&text);
        assert!(e.contains("(samples.extra_columns)"), "{bad}: {e}");
    }
}
