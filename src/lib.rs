//! # photon-ledger
//!
//! A `no_std`, allocation-free, panic-free library that turns a calibrated photodiode into a
//! dose meter and a dose controller on a small microcontroller.
//!
//! What matters in photochemistry, UV curing and photobiology is how much light *arrived*,
//! in the right units — not how long a lamp was on. This crate reads the photodiode,
//! converts to irradiance and photon irradiance for the configured band, integrates the dose
//! exactly, and switches the source off at the target.
//!
//! ## The pipeline, stage by stage
//!
//! One folder per stage, in the order a reading flows through them:
//!
//! ```text
//!  photodiode ─ transimpedance amp (ranges) ─ ADC
//!        │
//!  acquire/      reading: raw code + amplifier range + timestamp     PhotodiodeAdc (nb)
//!  frontend/     code → net code (once per reading: Sample) → volts → photocurrent
//!                autorange: next range from the Sample, hysteresis   OutputPin
//!  spectral/     band, table, action, spectrum, weighting, peak tolerance → factors
//!                (configuration time)
//!  irradiance/   photocurrent → W/m²: the Meter; calibration records (CRC, expiry)
//!  profile/      the Meter and its thresholds computed on a host, built without f64
//!  dose/         the one exact integer integral; thresholds in integer units
//!  time          the one timing policy and the 64-bit tick base
//!  control/      the shared safe-state pin layer and the controllers:
//!                session, curing/, exposure/, plausibility
//!  photochem/    photons into and absorbed by a vessel, quantum yield, actinometry
//!  journal/      record format, power-loss-safe log on NOR flash, checkpoints, export
//! ```
//!
//! **Acquire.** [`acquire::reading`] defines the
//! [`PhotodiodeAdc`](acquire::reading::PhotodiodeAdc) trait (one non-blocking method) and the
//! [`Reading`](acquire::reading::Reading) it yields once the caller stamps it with a tick
//! count, with adapters for a closure and (feature `ads1x1x`) for the ADS1x1x I²C converters
//! through their maintained driver.
//!
//! **Convert.** [`frontend`] validates the converter and amplifier description and computes
//! each reading's net (dark-corrected) code once ([`Sample`](frontend::Sample)), with
//! saturation flags, volts and photocurrent; [`frontend::autorange`] picks the next amplifier
//! range from each sample and drives the analog switch. [`spectral`] does the configuration-time work:
//! [`band`](spectral::band) reduces a line or an LED band to photons per joule;
//! [`table`](spectral::table) holds the validated tables and wavelength ranges,
//! [`action`](spectral::action) the action spectra (CIE erythema, ICNIRP S(λ), B(λ), UV-A);
//! [`spectrum`](spectral::spectrum) integrates tabulated sources, detector tables, spectral
//! mismatch and weighted fractions, and [`weighting`](spectral::weighting) turns them into
//! the weighted read-outs (UV index, SED, hazard times) — constant factors all.
//! [`irradiance`] turns photocurrent into
//! W/m²: its [`Meter`](irradiance::Meter) combines all configuration into per-range
//! constants, and [`irradiance::calibration`] is the sealed calibration record with its
//! expiry check. [`profile`] carries those constants, and the thresholds converted for every
//! range, from a host to the device as integers ([`MeterProfile`](profile::MeterProfile),
//! CRC-protected bytes or a `const`): [`Meter::from_profile`](irradiance::Meter::from_profile)
//! builds the meter without any floating-point operation.
//!
//! **Integrate.** [`dose`] holds the [`Integrator`](dose::Integrator): integer sums, one
//! segment per range, thresholds pre-converted to integer units, gaps charged conservatively
//! beside the measured dose. Every dose unit is a constant times its one integral. [`time`]
//! is the one timing policy (repeats, backwards steps, gaps, forward jumps) and the 64-bit
//! clock every controller shares.
//!
//! **Control.** [`control`] holds the safe-state sequence every controller drives its pins
//! with, and the controllers, each a policy over the one integral:
//! [`session`](control::session) is the basic dose-controlled exposure
//! ([`Session`](control::session::Session): target in J/m², mol/m² or mol, tolerance, phases,
//! outputs, pause/resume with the leak counted, dose milestones, an optional interlock,
//! progress and time to target); [`curing`](control::curing) is the curing-station
//! controller (actuator-lag anticipation, irradiance window, interlock monitor, light-off
//! check, lamp ageing, a record per part); [`exposure`](control::exposure) is the personal
//! exposure monitor (exact rolling window, warnings with hysteresis, latched alarm, UV index,
//! SED); [`plausibility`](control::plausibility) checks that the chain is alive.
//! [`photochem`] turns chemistry targets (absorbed einstein, conversion) into
//! radiant-exposure targets and computes quantum yields and actinometric calibrations.
//!
//! **Record.** [`journal`] is the session journal on NOR flash (`embedded-storage`): its
//! [`record`](journal::record) format (byte layout, CRC-32, version rule), a log that
//! survives a power cut at any byte, recovery of the open session and a conservative resume.
//!
//! Physical quantities are newtypes with the unit in every name ([`quantity`]). Time is
//! always an argument: the library never reads a clock.
//!
//! **Sources.** Every published value is cited by a short key (ICNIRP2004, IEC62471,
//! HP1956, …) listed with its full citation in [`references`]; text that names a source in
//! words ("ICNIRP 2004 Table 1") means the same entry.
//!
//! ## Example
//!
//! ```
//! use photon_ledger::prelude::*;
//! # use core::convert::Infallible;
//! # struct Pin;
//! # impl embedded_hal::digital::ErrorType for Pin { type Error = Infallible; }
//! # impl embedded_hal::digital::OutputPin for Pin {
//! #     fn set_low(&mut self) -> Result<(), Infallible> { Ok(()) }
//! #     fn set_high(&mut self) -> Result<(), Infallible> { Ok(()) }
//! # }
//! let front_end = FrontEnd::new(
//!     AdcSpec { bits: 12, reference: Voltage::from_v(3.3), pga_gain: 1.0,
//!               coding: Coding::Unipolar, saturation_margin: 2 },
//!     &[AmplifierRange { gain: Transimpedance::from_kohm(100.0), dark_offset: 4 }],
//! ).unwrap();
//! let meter = Meter::new(MeterConfig {
//!     front_end,
//!     calibration: Calibration::Responsivity {
//!         responsivity: Responsivity::from_a_per_w(0.2),
//!         active_area: Area::from_mm2(1.0),
//!     },
//!     band: Band::Led { peak: Wavelength::from_nm(405.0), fwhm: Wavelength::from_nm(15.0) },
//!     tick_rate: TickRate::from_hz(1_000).unwrap(),
//!     sample_area: None,
//! }).unwrap();
//! let config = SessionConfig {
//!     target: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(5.0)),
//!     tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(0.5)),
//!     max_gap_ticks: 100,
//!     max_unusable_run: 0,
//!     enable_level: ActiveLevel::High,
//!     alarm_level: ActiveLevel::High,
//! };
//! let mut session = Session::new(meter, config, Pin, Pin).unwrap();
//! session.start().unwrap();
//! // 2000 net codes = 1.611 V / 100 kΩ / (0.2 A/W × 1 mm²) ≈ 80.6 W/m² here; sample every
//! // 10 ms until the target (50 J/m², about 0.62 s) is met.
//! let mut t = 0;
//! while session.phase() == Phase::Exposing {
//!     session.on_reading(&Reading { code: 2004, range: RangeIndex(0), at: Ticks(t) }).unwrap();
//!     t += 10;
//! }
//! assert_eq!(session.phase(), Phase::TargetMet);
//! assert_eq!(t, 640); // the stop came with the 630 ms sample (50.76 J/m²; 620 ms gives 49.95)
//! let h = session.progress().exposure.mj_per_cm2();
//! assert!(h >= 5.0 && h < 5.0 + 0.081, "{h}");
//! ```
//!
//! ## Guarantees
//!
//! - `#![no_std]`, no allocator, `#![forbid(unsafe_code)]`; fixed capacity everywhere.
//! - No panicking path in library code (checked by a link-time test on `thumbv6m-none-eabi`).
//! - Configuration is validated once into typed errors; a running pipeline holds only valid
//!   configuration.
//!
//! This crate is **not** a certified safety device. Read `SAFETY.md` before wiring it to a
//! source of hazardous light.

#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]
#![warn(missing_docs)]
#![warn(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing,
    clippy::use_self
)]
#![cfg_attr(test, allow(clippy::unwrap_used, clippy::indexing_slicing))]

pub mod quantity;
pub mod time;

pub mod acquire;
pub mod control;
pub mod dose;
pub mod frontend;
pub mod irradiance;
pub mod journal;
pub mod photochem;
pub mod profile;
pub mod references;

/// This library's version (`CARGO_PKG_VERSION`), for reports that must name what they ran.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
pub mod spectral;

#[cfg(any(test, feature = "_test"))]
pub mod fixtures;

/// The types most firmware needs, in one import.
pub mod prelude {
    pub use crate::acquire::reading::{FnAdc, PhotodiodeAdc, RangeIndex, Reading, TickRate, Ticks};
    pub use crate::control::curing::{
        ActuatorLag, CuringConfig, CuringController, CuringFault, CuringPhase, Events, FallPoint,
        FallProfile, IrradianceLimit, IrradianceWindow, LampReference, LightOffCheck, PartId,
        PartRecord, StopPolicy, StopReason,
    };
    pub use crate::control::exposure::{
        ExposureConfig, ExposureError, ExposureMonitor, SolarMonitor, WeightFactor,
    };
    pub use crate::control::plausibility::{Implausible, Plausibility, PlausibilityConfig};
    pub use crate::control::session::{
        ActiveLevel, DoseAmount, Fault, Outcome, Phase, Progress, Session, SessionConfig,
        SessionError,
    };
    pub use crate::control::{PinError, Refusal};
    pub use crate::dose::{Integrator, Rounding, SampleError};
    pub use crate::frontend::autorange::{Autorange, AutorangeConfig, Decision};
    pub use crate::frontend::{AdcSpec, AmplifierRange, CodeFault, Coding, FrontEnd, Sample};
    pub use crate::irradiance::{Calibration, Meter, MeterConfig};
    pub use crate::journal::checkpoint::{CheckpointConfig, Checkpointer};
    pub use crate::journal::{Journal, JournalConfig, JournalError, Retention};
    pub use crate::photochem::reactor::{AbsorbanceModel, PhotochemConfig, Reactor};
    pub use crate::photochem::vessel::VesselGeometry;
    pub use crate::quantity::{
        Area, Current, Irradiance, IrradiancePerCurrent, PhotonAmount, PhotonExposure, PhotonFlux,
        PhotonIrradiance, RadiantExposure, Responsivity, Seconds, Transimpedance, Voltage,
        Wavelength,
    };
    pub use crate::spectral::band::{Band, BandFactors};
    pub use crate::spectral::spectrum::{
        Detector, IntegrationRule, Source, SpectralFactors, Spectrum, SpectrumRef, WavelengthRange,
    };
    pub use crate::spectral::weighting::{
        FactorSet, UvBand, UvBandEdges, UvIndex, WeightedExposure, WeightedIrradiance, Weighting,
        WeightingKind,
    };
}
