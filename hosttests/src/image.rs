//! Host-side decoder: a raw flash image (as read out of a device) back into the journal CSV.
//!
//! The image is loaded into a [`SimFlash`] of the device's geometry and mounted read-only (a
//! mount never writes); the records are exported with the same code the firmware uses, so a
//! CSV from the device's serial port and one decoded from its flash dump are identical.

use photon_ledger::journal::export::{export_csv, ExportError};
use photon_ledger::journal::{Journal, JournalConfig, JournalError};

use crate::flash::{SimError, SimFlash};

/// Why an image could not be decoded.
#[derive(Debug)]
pub enum DecodeError {
    /// The image length is not a whole number of `E`-byte sectors.
    Length,
    /// Mounting failed (a newer format, a configuration that does not fit the image).
    Mount(JournalError<SimError>),
    /// Reading the records failed.
    Export(ExportError<SimError>),
}

/// Decode `image` (the journal's flash range, from its base address) into CSV text.
/// `restatements` includes the journal's restatement records.
///
/// # Errors
/// [`DecodeError`].
pub fn image_to_csv<const R: usize, const W: usize, const E: usize>(
    image: &[u8],
    config: JournalConfig,
    restatements: bool,
) -> Result<String, DecodeError> {
    if image.is_empty() || !image.len().is_multiple_of(E) {
        return Err(DecodeError::Length);
    }
    let flash = SimFlash::<R, W, E>::from_image(image.to_vec());
    let mut journal = Journal::mount(flash, config).map_err(|e| DecodeError::Mount(e.error))?;
    let mut out = String::new();
    export_csv(&mut journal, &mut out, restatements).map_err(DecodeError::Export)?;
    Ok(out)
}
