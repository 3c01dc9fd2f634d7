//! Standard air and vacuum wavelengths: the refractivity of standard air, the conversion of
//! printed air wavelengths (line lists) to the vacuum wavelengths this crate uses everywhere,
//! and the mercury lines as printed. Re-exported by [`spectrum`](super); configuration time
//! only.

use crate::quantity::Wavelength;

/// Refractive index of standard air minus one, (n − 1), at a wavelength: the dispersion
/// formula of Peck & Reeder, J. Opt. Soc. Am. 62, 958 (1972) (dry air, 15 °C, 101 325 Pa,
/// 0.03 % CO₂; reference key PR1972; coefficients from memory). EDLEN1966 and CIDDOR1996
/// (450 ppm CO₂) give n − 1 within 2·10⁻⁹ and 1.9·10⁻⁸ of it at 254–546 nm (computed from
/// their formulas, also from memory). Stated valid 230–1690 nm; `None` outside 200–2000 nm.
#[must_use]
pub fn air_refractivity(w: Wavelength) -> Option<f64> {
    let um = w.nm() * 1e-3;
    if !(0.2..=2.0).contains(&um) {
        return None;
    }
    let s2 = 1.0 / (um * um);
    Some(1e-8 * (8_060.51 + 2_480_990.0 / (132.274 - s2) + 17_455.7 / (39.329_57 - s2)))
}

/// The vacuum wavelength of a standard-air wavelength (line lists such as the mercury lines
/// are printed in air; every wavelength in this crate is a vacuum wavelength). `None` outside
/// the range of [`air_refractivity`]. The refractivity is evaluated at the air wavelength,
/// not the vacuum one; that shortcut makes the result long by about 2·10⁻⁸ relative at
/// 254 nm (5·10⁻⁶ nm), 7.5·10⁻⁹ at 365 nm and 3·10⁻⁹ at 546 nm (computed by iterating
/// λ_vac = λ_air · n(λ_vac) with the same formula) — far below the ±0.001 nm of the line
/// lists and the 2·10⁻⁸ spread between the air formulas themselves.
#[must_use]
pub fn air_to_vacuum(air: Wavelength) -> Option<Wavelength> {
    air_refractivity(air).map(|r| Wavelength::from_m(air.m() * (1.0 + r)))
}

/// Mercury emission lines as printed, **standard-air** wavelengths in nm (reference key
/// SSR1996: Sansonetti, Salit & Reader, Appl. Opt. 35, 74 (1996) and the NIST ASD).
/// Convert with [`air_to_vacuum`] before use. The third decimal of 253.652 and 296.728 nm is
/// from memory (the two-decimal values are verified).
pub mod mercury_air_nm {
    /// Resonance line (low-pressure lamps).
    pub const HG_253_652: f64 = 253.652;
    /// 296.7 nm line.
    pub const HG_296_728: f64 = 296.728;
    /// 302.2 nm line.
    pub const HG_302_150: f64 = 302.150;
    /// Stronger component of the 313 nm doublet.
    pub const HG_313_155: f64 = 313.155;
    /// 334.1 nm line.
    pub const HG_334_148: f64 = 334.148;
    /// i-line.
    pub const HG_365_015: f64 = 365.015;
    /// h-line.
    pub const HG_404_656: f64 = 404.656;
    /// g-line.
    pub const HG_435_833: f64 = 435.833;
    /// Green line.
    pub const HG_546_074: f64 = 546.074;
}
