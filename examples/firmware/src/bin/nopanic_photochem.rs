//! No-panic link check, API group "photochem" (vessel, absorbed fraction, the reactor model
//! and its targets, quantum yield from a run, ferrioxalate actinometry). See
//! `src/nopanic/common.rs`.
//!
//! All inputs are invented for the check, not data. RAM: one `Reactor` (about 1.2 KB) and
//! one absorbance table live at a time; the microbit board has 16 KiB.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::dose::Rounding;
use photon_ledger::photochem::absorption::{
    band_fraction_absorbed, beer_lambert, fraction_absorbed, AbsorbanceTable, Absorption,
};
use photon_ledger::photochem::actinometry::{
    ActinometerYield, ActinometricCalibration, Checked, FerrioxalateRun, PhenanthrolineAssay,
    QuantumYieldPoint, QuantumYieldTable, QuantumYieldTableId, FE_PHEN_EPSILON_510,
    HATCHARD_PARKER_0_006_M, HATCHARD_PARKER_0_15_M, LEE_SELIGER_1964_0_006_M,
    WRIEDT_2020_FIT_POINTS,
};
use photon_ledger::photochem::quantum_yield::quantum_yield_from_run;
use photon_ledger::photochem::units::{
    Absorbance, AbsorbedFraction, ChemicalAmount, Concentration, Conversion,
    MolarAbsorptionCoefficient, PathLength, PhotonFluxPerIrradiance, QuantumYield, Transmission,
    Volume,
};
use photon_ledger::photochem::PhotochemError;
use photon_ledger::prelude::*;

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

fn nm(v: f64) -> Wavelength {
    Wavelength::from_nm(black_box(v))
}

fn led() -> Band {
    Band::Led {
        peak: nm(405.0),
        fwhm: nm(15.0),
    }
}

/// An absorbance table over the LED band (or a bad one for `narrow`).
fn table(narrow: bool) -> Result<AbsorbanceTable, PhotochemError> {
    let pts = black_box([
        (360.0, 0.9),
        (380.0, 0.8),
        (400.0, 0.6),
        (420.0, 0.4),
        (440.0, 0.2),
        (460.0, 0.1),
    ]);
    let mut v: heapless::Vec<(Wavelength, Absorbance), 6> = heapless::Vec::new();
    for (w, a) in pts {
        let w = if narrow { w / 2.0 + 200.0 } else { w };
        if v.push((nm(w), Absorbance::from_decadic(black_box(a))))
            .is_err()
        {
            break;
        }
    }
    AbsorbanceTable::new(&v)
}

#[inline(never)]
fn absorption() {
    for a in [0.0, 1e-9, 0.5, 20.0, -1.0, f64::NAN, f64::INFINITY] {
        match fraction_absorbed(Absorbance::from_decadic(black_box(a))) {
            Ok(f) => {
                black_box(f.value());
            }
            Err(e) => show(&e),
        }
    }
    for (eps, c, l) in [
        (1.0e4, 1.0e-4, 1.0),
        (-1.0, 1.0e-4, 1.0),
        (1.0e4, -1.0, 1.0),
        (1.0e4, 1.0e-4, 0.0),
        (1.0e300, 1.0e300, 1.0e300),
    ] {
        match beer_lambert(
            MolarAbsorptionCoefficient::from_l_per_mol_cm(black_box(eps)),
            Concentration::from_mol_per_l(black_box(c)),
            PathLength::from_cm(black_box(l)),
        ) {
            Ok(a) => {
                black_box(a.decadic());
            }
            Err(e) => show(&e),
        }
    }
    // Tables: too short, not increasing, bad value (each an error), and a good one.
    let one = [(nm(400.0), Absorbance::from_decadic(0.5))];
    let unordered = [
        (nm(400.0), Absorbance::from_decadic(0.5)),
        (nm(390.0), Absorbance::from_decadic(0.5)),
    ];
    let negative = [
        (nm(390.0), Absorbance::from_decadic(0.5)),
        (nm(400.0), Absorbance::from_decadic(black_box(-0.5))),
    ];
    for pts in [&one[..], &unordered[..], &negative[..]] {
        if let Err(e) = AbsorbanceTable::new(black_box(pts)) {
            show(&e);
        }
    }
    for narrow in [false, true] {
        let t = match table(narrow) {
            Ok(t) => t,
            Err(e) => {
                show(&e);
                continue;
            }
        };
        black_box((t.len(), t.is_empty(), t.span(), t.max_absorbance()));
        for w in [360.0, 405.0, 500.0, f64::NAN] {
            match t.absorbance_at(nm(w)) {
                Ok(a) => {
                    black_box(a.decadic());
                }
                Err(e) => show(&e),
            }
        }
        let absorptions = [
            Absorption::Absorbance(Absorbance::from_decadic(black_box(0.3))),
            Absorption::BeerLambert {
                epsilon: MolarAbsorptionCoefficient::from_l_per_mol_cm(black_box(5.0e3)),
                concentration: Concentration::from_mmol_per_l(black_box(0.1)),
                path: PathLength::from_cm(black_box(1.0)),
            },
            Absorption::Table(&t),
        ];
        for band in [led(), Band::Line(nm(405.0)), Band::Line(nm(-1.0))] {
            for a in &absorptions {
                match band_fraction_absorbed(a, &band) {
                    Ok(f) => {
                        black_box(f.value());
                    }
                    Err(e) => show(&e),
                }
            }
        }
    }
}

fn vessel(ok: bool) -> VesselGeometry {
    if black_box(ok) {
        VesselGeometry::IlluminatedArea {
            area: Area::from_cm2(black_box(4.0)),
            transmission: Transmission::from_fraction(black_box(0.92)),
        }
    } else {
        VesselGeometry::FluxFactor {
            factor: PhotonFluxPerIrradiance::from_umol_per_s_per_w_per_m2(black_box(-1.0)),
            transmission: Transmission::LOSSLESS,
        }
    }
}

fn config<'a>(absorption: Absorption<'a>, model: AbsorbanceModel) -> PhotochemConfig<'a> {
    PhotochemConfig {
        band: led(),
        vessel: vessel(true),
        absorption,
        model,
        reactant: Some(ChemicalAmount::from_umol(black_box(20.0))),
        quantum_yield: QuantumYield::new(black_box(0.4)).ok(),
    }
}

/// Every target conversion and read-out of one reactor.
#[inline(never)]
fn targets(r: &Reactor<'_>) {
    black_box(r.vessel().factor().mol_per_s_per_w_per_m2());
    black_box(r.initial_absorbed_fraction().value());
    black_box(r.model());
    black_box(r.conversion_error_bound());
    for n in [2.0, 0.0, f64::NAN, 1.0e9] {
        let amount = PhotonAmount::from_umol(black_box(n));
        match r.absorbed_target_to_exposure(amount) {
            Ok(h) => {
                black_box(h.j_per_m2());
            }
            Err(e) => show(&e),
        }
        for rounding in [Rounding::NotBefore, Rounding::NotAfter] {
            match r.absorbed_to_exposure(amount, rounding) {
                Ok(h) => {
                    black_box(h.j_per_m2());
                }
                Err(e) => show(&e),
            }
            match r.incident_to_exposure(amount, rounding) {
                Ok(h) => {
                    black_box(h.j_per_m2());
                }
                Err(e) => show(&e),
            }
        }
    }
    for x in [0.5, 0.0, 0.9999, f64::NAN] {
        let c = Conversion::from_fraction(black_box(x));
        match r.conversion_target_to_exposure(c) {
            Ok(h) => {
                black_box(h.j_per_m2());
            }
            Err(e) => show(&e),
        }
        for rounding in [Rounding::NotBefore, Rounding::NotAfter] {
            match r.conversion_to_exposure(c, rounding) {
                Ok(h) => {
                    black_box(h.j_per_m2());
                }
                Err(e) => show(&e),
            }
        }
    }
    for h in [0.0, 50.0, 5.0e4, 1.0e12, -1.0, f64::NAN] {
        let e = r.estimate(RadiantExposure::from_j_per_m2(black_box(h)));
        black_box((
            e.incident.mol(),
            e.absorbed.mol(),
            e.product.map(|p| p.mol()),
            e.conversion.map(|c| c.fraction()),
            e.within_model,
        ));
    }
}

/// Φ from a run under one configuration: a good run and each error path.
#[inline(never)]
fn run_yield(c: &PhotochemConfig<'_>) {
    for (h, converted) in [
        (500.0, 5.0),
        (500.0, 0.0),
        (0.0, 5.0),
        (500.0, -1.0),
        (500.0, 30.0),
    ] {
        match quantum_yield_from_run(
            c,
            RadiantExposure::from_j_per_m2(black_box(h)),
            ChemicalAmount::from_umol(black_box(converted)),
        ) {
            Ok(q) => {
                black_box((
                    q.quantum_yield.value(),
                    q.incident.mol(),
                    q.absorbed.mol(),
                    q.mean_absorbed_fraction.value(),
                    q.vessel_factor.mol_per_s_per_w_per_m2(),
                ));
            }
            Err(e) => show(&e),
        }
    }
}

#[inline(never)]
fn reactors() {
    let t = match table(false) {
        Ok(t) => t,
        Err(e) => {
            show(&e);
            return;
        }
    };
    let absorptions = [
        Absorption::Absorbance(Absorbance::from_decadic(black_box(0.3))),
        Absorption::BeerLambert {
            epsilon: MolarAbsorptionCoefficient::from_l_per_mol_cm(black_box(5.0e3)),
            concentration: Concentration::from_mmol_per_l(black_box(0.1)),
            path: PathLength::from_cm(black_box(1.0)),
        },
        Absorption::Table(&t),
    ];
    for model in [
        AbsorbanceModel::Constant,
        AbsorbanceModel::FallsWithConversion,
    ] {
        for a in absorptions {
            let c = config(a, black_box(model));
            match Reactor::new(&c) {
                Ok(r) => targets(&r),
                Err(e) => show(&e),
            }
            run_yield(&c);
        }
    }
    // Error paths of the configuration, each under the depletion model.
    let base = config(
        Absorption::Absorbance(Absorbance::from_decadic(black_box(0.3))),
        AbsorbanceModel::FallsWithConversion,
    );
    let bad = [
        PhotochemConfig {
            reactant: None,
            ..base
        },
        PhotochemConfig {
            quantum_yield: None,
            ..base
        },
        PhotochemConfig {
            reactant: Some(ChemicalAmount::from_mol(black_box(-1.0))),
            ..base
        },
        PhotochemConfig {
            absorption: Absorption::Absorbance(Absorbance::ZERO),
            ..base
        },
        PhotochemConfig {
            absorption: Absorption::Absorbance(Absorbance::from_decadic(black_box(f64::NAN))),
            ..base
        },
        PhotochemConfig {
            vessel: vessel(false),
            ..base
        },
        PhotochemConfig {
            band: Band::Led {
                peak: nm(405.0),
                fwhm: nm(-15.0),
            },
            ..base
        },
        PhotochemConfig {
            band: Band::Line(nm(300.0)),
            absorption: Absorption::Table(&t),
            ..base
        },
    ];
    for c in &bad {
        match Reactor::new(c) {
            Ok(r) => targets(&r),
            Err(e) => show(&e),
        }
        if let Err(e) = quantum_yield_from_run(
            c,
            RadiantExposure::from_j_per_m2(black_box(500.0)),
            ChemicalAmount::from_umol(black_box(5.0)),
        ) {
            show(&e);
        }
    }
    // Constant model, no Φ and no reactant: conversion targets need them.
    let plain = PhotochemConfig {
        reactant: None,
        quantum_yield: None,
        model: AbsorbanceModel::Constant,
        ..base
    };
    match Reactor::new(&plain) {
        Ok(r) => targets(&r),
        Err(e) => show(&e),
    }
}

#[inline(never)]
fn actinometry() {
    let user_points = [
        QuantumYieldPoint {
            wavelength_nm: black_box(350.0),
            quantum_yield: black_box(1.2),
            checked: Checked::FromMemory,
        },
        QuantumYieldPoint {
            wavelength_nm: black_box(450.0),
            quantum_yield: black_box(1.0),
            checked: Checked::Secondary,
        },
    ];
    let bad_points = [
        QuantumYieldPoint {
            wavelength_nm: black_box(350.0),
            quantum_yield: black_box(-1.2),
            checked: Checked::Verified,
        },
        QuantumYieldPoint {
            wavelength_nm: black_box(340.0),
            quantum_yield: black_box(1.0),
            checked: Checked::Verified,
        },
    ];
    let user = |points, gap| QuantumYieldTable {
        id: QuantumYieldTableId::User(black_box(3)),
        citation: "invented for the check",
        concentration: None,
        points,
        max_gap_nm: black_box(gap),
    };
    let tables = [
        HATCHARD_PARKER_0_006_M,
        HATCHARD_PARKER_0_15_M,
        LEE_SELIGER_1964_0_006_M,
        WRIEDT_2020_FIT_POINTS,
        user(&user_points, 100.0),
        user(&user_points, f64::NAN),
        user(&bad_points, 100.0),
        user(bad_points.get(1..).unwrap_or(&[]), 100.0),
        user(&[], 100.0),
    ];
    let mut chosen: Option<ActinometerYield> = None;
    for t in &tables {
        for w in [405.0, 365.5, 420.0, 600.0, f64::NAN] {
            match t.at(nm(w)) {
                Ok(y) => {
                    black_box((y.quantum_yield.value(), y.table, y.checked));
                }
                Err(e) => show(&e),
            }
        }
        for band in [led(), Band::Line(nm(365.0)), Band::Line(nm(f64::NAN))] {
            match t.band_average(&band) {
                Ok(y) => {
                    black_box((y.quantum_yield.value(), y.checked));
                    chosen = chosen.or(Some(y));
                }
                Err(e) => show(&e),
            }
        }
    }
    let Some(phi) = chosen else {
        return;
    };
    let assay = PhenanthrolineAssay {
        delta_absorbance: Absorbance::from_decadic(black_box(0.45)),
        irradiated_volume: Volume::from_ml(black_box(3.0)),
        aliquot_volume: Volume::from_ml(black_box(0.5)),
        complexed_volume: Volume::from_ml(black_box(10.0)),
        path_length: PathLength::from_cm(black_box(1.0)),
        epsilon_510: FE_PHEN_EPSILON_510,
    };
    let run = FerrioxalateRun {
        assay,
        quantum_yield: phi,
        absorbed_fraction: AbsorbedFraction::TOTAL,
        irradiation_time: Seconds::from_s(black_box(60.0)),
    };
    let runs = [
        run,
        FerrioxalateRun {
            assay: PhenanthrolineAssay {
                aliquot_volume: Volume::from_ml(black_box(5.0)),
                ..assay
            },
            ..run
        },
        FerrioxalateRun {
            assay: PhenanthrolineAssay {
                complexed_volume: Volume::from_ml(black_box(-1.0)),
                ..assay
            },
            ..run
        },
        FerrioxalateRun {
            assay: PhenanthrolineAssay {
                delta_absorbance: Absorbance::ZERO,
                ..assay
            },
            ..run
        },
        FerrioxalateRun {
            absorbed_fraction: AbsorbedFraction::new(black_box(0.0))
                .unwrap_or(AbsorbedFraction::TOTAL),
            irradiation_time: Seconds::from_s(black_box(0.0)),
            ..run
        },
    ];
    for r in &runs {
        match r.incident_photon_flux() {
            Ok(q) => {
                black_box(q.mol_per_s());
            }
            Err(e) => show(&e),
        }
        for (h, k) in [(200.0, 5.0e6), (0.0, 5.0e6), (200.0, -1.0)] {
            let band = if black_box(h > 1e6) {
                Band::Line(nm(-1.0))
            } else {
                led()
            };
            match ActinometricCalibration::from_run(
                r,
                RadiantExposure::from_j_per_m2(black_box(h)),
                IrradiancePerCurrent::from_w_per_m2_per_a(black_box(k)),
                &band,
            ) {
                Ok(cal) => {
                    black_box((
                        cal.flux_per_current.mol_per_s_per_a(),
                        cal.equivalent_wavelength.nm(),
                        cal.mean_photon_flux.mol_per_s(),
                        cal.vessel_geometry(),
                    ));
                    for k2 in [4.0e6, 0.0, f64::NAN] {
                        match cal.flux_per_irradiance_for(
                            IrradiancePerCurrent::from_w_per_m2_per_a(black_box(k2)),
                        ) {
                            Ok(f) => {
                                black_box(f.mol_per_s_per_w_per_m2());
                            }
                            Err(e) => show(&e),
                        }
                    }
                }
                Err(e) => show(&e),
            }
        }
    }
    // A bad band for the calibration.
    if let Err(e) = ActinometricCalibration::from_run(
        &run,
        RadiantExposure::from_j_per_m2(black_box(200.0)),
        IrradiancePerCurrent::from_w_per_m2_per_a(black_box(5.0e6)),
        &Band::Line(nm(5000.0)),
    ) {
        show(&e);
    }
}

#[entry]
fn main() -> ! {
    absorption();
    reactors();
    actinometry();
    done()
}
