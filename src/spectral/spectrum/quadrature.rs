//! The composite trapezoid rule on the union of all breakpoints (see the
//! [`spectrum` module documentation](super)): a validated source shape, the factors of an
//! integrand (detector table, weighting function, photons per joule), the interval asked for,
//! and the one integration loop every spectral factor is computed with. Crate-private;
//! configuration time only.

use super::{IntegrationRule, Source};
use crate::quantity::si;
use crate::spectral::action::Weighting;
use crate::spectral::band::{
    snap_nm, Band, BandError, BandFactors, LedShape, LED_TRUNCATION_SIGMA, MAX_WAVELENGTH_NM,
    MIN_WAVELENGTH_NM,
};
use crate::spectral::table::{SpectrumRef, WavelengthRange};

/// Upper bound on the steps of one sub-interval between nodes (a guard; a valid rule on the
/// supported range needs at most 2.4 · 10⁶).
const MAX_SUBSTEPS: f64 = 4_000_000.0;

/// A validated source, ready to evaluate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Shape<'a> {
    Line(f64),
    Led {
        /// Peak in 1/nm (proportional to photon energy).
        u0: f64,
        /// Energy standard deviation, 1/nm.
        sigma: f64,
        peak_nm: f64,
        lo_nm: f64,
        hi_nm: f64,
    },
    Table(SpectrumRef<'a>),
}

impl<'a> Shape<'a> {
    pub(super) fn new(source: &Source<'a>) -> Result<Self, BandError> {
        match *source {
            Source::Line(w) => {
                BandFactors::new(&Band::Line(w))?;
                Ok(Self::Line(snap_nm(w)))
            }
            Source::Led { peak, fwhm } => {
                BandFactors::new(&Band::Led { peak, fwhm })?;
                // Centre and width solved so the wavelength maximum and FWHM per nm are the
                // configured ones (see `LedShape`).
                let shape = LedShape::new(peak, fwhm)?;
                let p = shape.peak_nm();
                let u0 = shape.centre_per_nm();
                let sigma = shape.sigma_per_nm();
                let u_hi = u0 + LED_TRUNCATION_SIGMA * sigma;
                let u_lo = (u0 - LED_TRUNCATION_SIGMA * sigma).max(1.0 / MAX_WAVELENGTH_NM);
                let lo_nm = (1.0 / u_hi).max(MIN_WAVELENGTH_NM);
                let hi_nm = (1.0 / u_lo).min(MAX_WAVELENGTH_NM);
                Ok(Self::Led {
                    u0,
                    sigma,
                    peak_nm: p,
                    lo_nm,
                    hi_nm,
                })
            }
            Source::Tabulated(t) => Ok(Self::Table(t)),
        }
    }

    /// Support of a continuous shape, closed.
    pub(super) fn span(&self) -> (f64, f64) {
        match *self {
            Self::Line(nm) => (nm, nm),
            Self::Led { lo_nm, hi_nm, .. } => (lo_nm, hi_nm),
            Self::Table(t) => t.span_nm(),
        }
    }

    /// Spectral density at `nm` inside the support (relative units).
    fn density(&self, nm: f64) -> f64 {
        match *self {
            Self::Line(_) => 0.0,
            Self::Led { u0, sigma, .. } => {
                let u = 1.0 / nm;
                let z = (u - u0) / sigma;
                libm::exp(-0.5 * z * z) * u * u
            }
            Self::Table(t) => t.linear_nm(nm).unwrap_or(0.0),
        }
    }

    fn next_break_after(&self, nm: f64) -> Option<f64> {
        match *self {
            Self::Line(_) => None,
            Self::Led {
                peak_nm,
                lo_nm,
                hi_nm,
                ..
            } => [lo_nm, peak_nm, hi_nm].into_iter().find(|&b| b > nm),
            Self::Table(t) => t.next_point_after(nm),
        }
    }
}

/// One factor of an integrand, evaluated inside its closed support.
#[derive(Clone, Copy)]
pub(super) enum Term<'a> {
    /// A linearly interpolated table (detector relative responsivity).
    Table(SpectrumRef<'a>),
    /// A weighting function.
    Weight(&'a Weighting<'a>),
    /// Photons per joule at the wavelength, λ/(hc).
    PhotonsPerJoule,
}

impl Term<'_> {
    pub(super) fn span(&self) -> (f64, f64) {
        match self {
            Self::Table(t) => t.span_nm(),
            Self::Weight(w) => w.support_nm(),
            Self::PhotonsPerJoule => (MIN_WAVELENGTH_NM, MAX_WAVELENGTH_NM),
        }
    }

    /// Whether a line at `nm` is inside the support (closed; a window is half-open).
    fn contains(&self, nm: f64) -> bool {
        match self {
            Self::Weight(w) => w.contains_nm(nm),
            _ => {
                let (lo, hi) = self.span();
                lo <= nm && nm <= hi
            }
        }
    }

    fn value(&self, nm: f64) -> f64 {
        match self {
            Self::Table(t) => t.linear_nm(nm).unwrap_or(0.0),
            Self::Weight(w) => w.value_in_support_nm(nm),
            Self::PhotonsPerJoule => nm * 1e-9 / si::HC_J_M,
        }
    }

    fn next_break_after(&self, nm: f64) -> Option<f64> {
        match self {
            Self::Table(t) => t.next_point_after(nm),
            Self::Weight(w) => w.next_break_after_nm(nm),
            Self::PhotonsPerJoule => None,
        }
    }
}

/// The interval an integral is asked for: the band `[lo, hi)`, or everything.
#[derive(Clone, Copy)]
pub(super) enum Span {
    Band(WavelengthRange),
    All,
}

impl Span {
    fn bounds(&self) -> (f64, f64) {
        match self {
            Self::Band(b) => (b.lo_nm(), b.hi_nm()),
            Self::All => (MIN_WAVELENGTH_NM, MAX_WAVELENGTH_NM),
        }
    }

    fn contains(&self, nm: f64) -> bool {
        match self {
            Self::Band(b) => b.contains_nm(nm),
            Self::All => (MIN_WAVELENGTH_NM..=MAX_WAVELENGTH_NM).contains(&nm),
        }
    }
}

/// ∫ E(λ) Π terms dλ by the rule of the [module documentation](super).
pub(super) fn integrate(
    shape: &Shape<'_>,
    span: Span,
    terms: &[Term<'_>],
    rule: &IntegrationRule,
) -> f64 {
    let integrand = |nm: f64| {
        terms
            .iter()
            .fold(shape.density(nm), |acc, t| acc * t.value(nm))
    };
    if let Shape::Line(nm) = *shape {
        let inside = span.contains(nm) && terms.iter().all(|t| t.contains(nm));
        return if inside {
            terms.iter().fold(1.0, |acc, t| acc * t.value(nm))
        } else {
            0.0
        };
    }
    let (mut a, mut b) = span.bounds();
    let (slo, shi) = shape.span();
    a = a.max(slo);
    b = b.min(shi);
    for t in terms {
        let (lo, hi) = t.span();
        a = a.max(lo);
        b = b.min(hi);
    }
    if a.partial_cmp(&b) != Some(core::cmp::Ordering::Less) {
        return 0.0;
    }
    let mut x = a;
    let mut fx = integrand(x);
    let mut sum = 0.0;
    while x < b {
        let mut next = b;
        if let Some(p) = shape.next_break_after(x) {
            next = next.min(p);
        }
        for t in terms {
            if let Some(p) = t.next_break_after(x) {
                next = next.min(p);
            }
        }
        if next <= x {
            // Cannot happen for finite breakpoints (each is > x); stop rather than loop.
            break;
        }
        let width = next - x;
        let steps = libm::ceil(width / rule.max_step_nm).clamp(1.0, MAX_SUBSTEPS);
        // Bounded by MAX_SUBSTEPS above, so the conversion is exact.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let n = steps as u32;
        let h = width / steps;
        let mut piece = 0.0;
        let mut f_left = fx;
        for k in 1..=n {
            let xk = if k == n {
                next
            } else {
                x + width * (f64::from(k) / steps)
            };
            let fk = integrand(xk);
            piece += f_left + fk;
            f_left = fk;
        }
        sum += 0.5 * h * piece;
        x = next;
        fx = f_left;
    }
    sum
}
