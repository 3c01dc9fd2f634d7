//! The crate against check tables made by outside libraries (committed under
//! `hosttests/refcheck/`, each naming the library and version that made it; regenerating
//! them is a manual step, see DEVELOPERS.md "Outside checks"). CI runs only these Rust tests
//! on the committed tables; it needs no Python.

use std::path::PathBuf;

use photon_ledger::prelude::*;
use photon_ledger::quantity::si;
use photon_ledger::spectral::weighting::blue_light_hazard;

fn path(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("refcheck")
        .join(name)
}

fn json(name: &str) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path(name)).unwrap()).unwrap()
}

/// Rows of a committed CSV: a `#` comment line naming the generator, a header, then numbers.
fn csv_rows(name: &str) -> (String, Vec<(f64, f64)>) {
    let text = std::fs::read_to_string(path(name)).unwrap();
    let mut lines = text.lines();
    let comment = lines.next().unwrap().to_string();
    assert!(comment.starts_with('#'), "{name}: generator comment");
    let _header = lines.next().unwrap();
    let rows = lines
        .filter(|l| !l.trim().is_empty())
        .map(|l| {
            let mut it = l.split(',').map(|x| x.trim().parse::<f64>().unwrap());
            (it.next().unwrap(), it.next().unwrap())
        })
        .collect();
    (comment, rows)
}

#[test]
fn si_constants_equal_scipy_constants() {
    // scipy 1.17.1 scipy.constants (CODATA; h, c, e, N_A exact since SI2019), constants.json.
    let k = json("constants.json");
    assert_eq!(k["library"], "scipy");
    assert_eq!(k["version"], "1.17.1");
    let v = |key: &str| k[key].as_f64().unwrap();
    assert_eq!(si::PLANCK_J_S, v("planck_j_s"));
    assert_eq!(si::SPEED_OF_LIGHT_M_PER_S, v("speed_of_light_m_per_s"));
    assert_eq!(si::ELEMENTARY_CHARGE_C, v("elementary_charge_c"));
    assert_eq!(si::AVOGADRO_PER_MOL, v("avogadro_per_mol"));
    // h·c/e in eV·nm through the crate's photon energy: 1 nm → E in eV, × 1 nm. A few f64
    // roundings apart (rel 1e-14).
    let hc_e = Wavelength::from_nm(1.0).photon_energy().ev();
    assert!((hc_e / v("hc_over_e_ev_nm") - 1.0).abs() < 1e-14, "{hc_e}");
}

#[test]
fn astm_g173_uv_average_photon_energy_equals_pvlib() {
    // pvlib 0.16.1: average_photon_energy of the ASTM G173-03 global tilt spectrum
    // (ASTMG173), 280–400 nm (241 rows at 0.5 nm), in astm_g173_uv.json. pvlib integrates
    // E and E·λ/(hc) by the trapezoid rule on the table's own 0.5 nm nodes; the crate
    // interpolates E linearly and integrates in 0.1 nm steps. Both are exact for ∫E dλ; for
    // the photon integral (E·λ quadratic within a row interval) the node trapezoid errs by
    // about h²/12·∫(E·λ)'' ≈ 1e-6 relative here, so the tolerance is 1e-5.
    let meta = json("astm_g173_uv.json");
    assert_eq!(meta["library"], "pvlib");
    assert_eq!(meta["version"], "0.16.1");
    let ape_pvlib = meta["average_photon_energy_ev"].as_f64().unwrap();
    let (comment, rows) = csv_rows("astm_g173_uv.csv");
    assert!(comment.contains("pvlib 0.16.1"), "{comment}");
    assert_eq!(rows.len(), 241);
    let spectrum = Spectrum::<256>::from_nm(&rows).unwrap();
    let flat = [(250.0, 1.0), (450.0, 1.0)];
    let detector = Detector::new(
        SpectrumRef::from_nm(&flat).unwrap(),
        Wavelength::from_nm(300.0),
        Responsivity::from_a_per_w(1.0),
    )
    .unwrap();
    let f = SpectralFactors::new(
        &Source::Tabulated(spectrum.as_ref()),
        WavelengthRange::from_nm(280.0, 400.0).unwrap(),
        &detector,
        &IntegrationRule::default(),
    )
    .unwrap();
    let ape = 1.0 / f.photons_per_j() / si::ELEMENTARY_CHARGE_C;
    let rel = (ape / ape_pvlib - 1.0).abs();
    assert!(
        rel < 1e-5,
        "crate {ape} eV, pvlib {ape_pvlib} eV, rel {rel:e}"
    );
}

#[test]
fn blue_light_hazard_equals_luxpy_from_380_nm() {
    // luxpy 1.12.5 luxpy.toolboxes.photbiochem._BLH (IEC 62471 B(λ), rows 380–500 nm in 5 nm
    // steps interpolated linearly to 1 nm, 10^((450 − λ)/50) for 501–600 nm, 0.001 for
    // 601–700 nm), in blue_light_b.csv. The crate's function must agree to 1e-12 (the formula
    // part differs only by the exp/log form of 10^x).
    let (comment, rows) = csv_rows("blue_light_b.csv");
    assert!(comment.contains("luxpy v1.12.5"), "{comment}");
    let mut compared = 0;
    for (nm, b) in rows {
        let ours = blue_light_hazard(Wavelength::from_nm(nm));
        if nm >= 380.0 {
            assert!((ours - b).abs() <= 1e-12, "{nm}: crate {ours}, luxpy {b}");
            compared += 1;
        } else {
            // Known difference: luxpy's table starts at 380 nm (below it luxpy extrapolates
            // towards 0); IEC62471 Table 4.2 starts at 300 nm with B = 0.01 (from memory).
            // Not checked by luxpy: only that the crate keeps the standard's 0.01 here.
            let _ = b;
            assert_eq!(ours, 0.01, "{nm}");
        }
    }
    assert_eq!(compared, 321); // 380..=700 nm at 1 nm
}
