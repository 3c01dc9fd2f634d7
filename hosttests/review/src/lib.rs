//! photon-review: the host review tool, built on the same library code as the firmware.
//!
//! | module | what |
//! | --- | --- |
//! | [`config`] | the session configuration file (TOML), validated into the library's types |
//! | [`samples`] | the sample file (CSV) → the library's `Reading`s |
//! | [`replay`] | samples through the library's `Session`; statistics, events, plot series |
//! | [`report`] | the report (JSON with documented keys, and text) |
//! | [`plot`] | the SVG plot |
//! | [`simulate`] | sample files from the simulation models, for named scenarios |
//! | [`explain`] | the derived factors of a configuration |
//! | [`decode`] | a raw flash image of the journal → records (CSV, JSON) and a session summary |
//! | [`demo_image`] | a demonstration flash image written by the real journal on the simulated flash |
//! | [`register`] | the exposure register (SQLite): import sessions, answer questions |
//!
//! Every configuration key and report key, with its unit, is documented in
//! `hosttests/review/CONFIG.md`.

pub mod config;
pub mod decode;
pub mod demo_image;
pub mod error;
pub mod explain;
pub mod monitor;
pub mod plot;
pub mod register;
pub mod replay;
pub mod report;
pub mod samples;
pub mod simulate;
pub mod time;

pub use error::{Place, ReviewError};
