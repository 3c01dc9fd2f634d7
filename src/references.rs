//! The primary sources behind every published value in this crate (documentation only: this
//! module has no code).
//!
//! Code, comments and tests cite a source by its **key** (for example `ICNIRP2004 Table 1`).
//! Only primary sources are listed: standards, regulations, reports, papers and, for computed
//! check tables, a general-purpose library with its version. Where a value was read in a
//! reproduction rather than in the source itself, or entered from memory, the place that uses
//! it says so ("from memory", "not checked against the printed table"); the key still names
//! the primary source the value belongs to.
//!
//! # Constants and units
//!
//! <a id="si2019"></a>**SI2019** — BIPM, *The International System of Units (SI)*, 9th
//! edition, 2019 (SI Brochure); defining constants fixed by the 26th CGPM (2018), Resolution 1:
//! h = 6.626 070 15 × 10⁻³⁴ J s, c = 299 792 458 m/s, e = 1.602 176 634 × 10⁻¹⁹ C,
//! N_A = 6.022 140 76 × 10²³ mol⁻¹ (Table 1 of the brochure).
//!
//! <a id="codata2018"></a>**CODATA2018** — E. Tiesinga, P. J. Mohr, D. B. Newell and
//! B. N. Taylor, "CODATA recommended values of the fundamental physical constants: 2018",
//! Rev. Mod. Phys. 93, 025010 (2021). Checked through `scipy.constants` (see
//! `hosttests/refcheck/`).
//!
//! <a id="iupac2007"></a>**IUPAC2007** — S. E. Braslavsky, "Glossary of terms used in
//! photochemistry, 3rd edition (IUPAC Recommendations 2006)", Pure Appl. Chem. 79(3),
//! 293–465 (2007): quantum yield (integral and differential forms), photon flux on an amount
//! basis (einstein s⁻¹), absorbed fraction 1 − 10^(−A). Also in the IUPAC *Compendium of
//! Chemical Terminology* (Gold Book), entries Q04991 and AT07312.
//!
//! # Photobiology: weighting functions and exposure limits
//!
//! <a id="icnirp2004"></a>**ICNIRP2004** — International Commission on Non-Ionizing Radiation
//! Protection, "Guidelines on limits of exposure to ultraviolet radiation of wavelengths
//! between 180 nm and 400 nm (incoherent optical radiation)", Health Phys. 87(2), 171–186
//! (2004). Table 1: relative spectral effectiveness S(λ) and exposure limit, 180–400 nm;
//! the 30 J/m² effective daily limit; the UV-A eye limit.
//!
//! <a id="icnirp2013"></a>**ICNIRP2013** — International Commission on Non-Ionizing Radiation
//! Protection, "ICNIRP guidelines on limits of exposure to incoherent visible and infrared
//! radiation", Health Phys. 105(1), 74–96 (2013). Table 2: blue-light hazard function B(λ),
//! 300–700 nm; Table 5: retinal photochemical (blue-light) limits.
//!
//! <a id="iec62471"></a>**IEC62471** — IEC 62471:2006 / CIE S 009:2002, *Photobiological
//! safety of lamps and lamp systems*. §4.3.1 (actinic UV, t_max = 30/E_S, Eq. 4.2); §4.3.2
//! (UV-A eye, 10⁴ J/m² for t ≤ 1000 s, 10 W/m² beyond); §4.3.3 and §4.3.4 (retinal
//! blue-light hazard, radiance and small-source irradiance limits); Table 4.2 (B(λ) and
//! R(λ) weighting functions, 300–1400 nm).
//!
//! <a id="eu2006"></a>**EU2006** — Directive 2006/25/EC of the European Parliament and of the
//! Council of 5 April 2006 on the minimum health and safety requirements regarding the
//! exposure of workers to risks arising from physical agents (artificial optical radiation),
//! OJ L 114, 27.4.2006, p. 38–59. Annex I, Table 1.1 (limits), Table 1.2 (S(λ) in 1 nm
//! steps), Table 1.3 (B(λ)); Article 2 (UV-A/B/C band limits).
//!
//! <a id="acgih2022"></a>**ACGIH2022** — American Conference of Governmental Industrial
//! Hygienists, *TLVs and BEIs*, 2022 edition, "Ultraviolet radiation" (S(λ) and TLVs; equal
//! to ICNIRP2004 from 240 nm, different below).
//!
//! <a id="iso17166"></a>**ISO17166** — ISO/CIE 17166:2019 (earlier ISO 17166:1999 /
//! CIE S 007/E-1998), *Erythema reference action spectrum and standard erythema dose*: the
//! three-piece s_er(λ) with the constant 140 in the UV-A piece, 250–400 nm; 1 SED = 100 J/m²
//! erythemally weighted.
//!
//! <a id="who2002"></a>**WHO2002** — World Health Organization, World Meteorological
//! Organization, United Nations Environment Programme, International Commission on
//! Non-Ionizing Radiation Protection, *Global Solar UV Index: A Practical Guide*, WHO,
//! Geneva, 2002 (WHO/SDE/OEH/02.2): UVI = 40 m²/W × E_er, integration from 250 nm, exposure
//! categories of the rounded index (low 0–2 … extreme 11+), the example E_er = 0.2 W/m²
//! gives UVI 8.
//!
//! <a id="cie-ilv"></a>**CIE-ILV** — CIE S 017:2020, *ILV: International Lighting
//! Vocabulary*, 2nd edition: term 17-25-115 (spectral mismatch correction factor F\*), term
//! 17-26-054 (UV hazard function S_UV(λ)).
//!
//! <a id="iso21348"></a>**ISO21348** — ISO 21348:2007, *Space environment (natural and
//! artificial) — Process for determining solar irradiances*: UV-C 100–280 nm, UV-B
//! 280–315 nm, UV-A 315–400 nm (text not read; the same limits are in EU2006 Article 2).
//!
//! # Photochemistry and actinometry
//!
//! <a id="hp1956"></a>**HP1956** — C. G. Hatchard and C. A. Parker, "A new sensitive chemical
//! actinometer. II. Potassium ferrioxalate as a standard chemical actinometer", Proc. R. Soc.
//! Lond. A 235, 518–536 (1956): Φ(Fe²⁺) at 0.006 M and 0.15 M, 254–579 nm; ε₅₁₀ of
//! Fe(phen)₃²⁺.
//!
//! <a id="iupac2004"></a>**IUPAC2004** — H. J. Kuhn, S. E. Braslavsky and R. Schmidt,
//! "Chemical actinometry (IUPAC Technical Report)", Pure Appl. Chem. 76(12), 2105–2146
//! (2004): the ferrioxalate procedure and working equation, and the HP1956 quantum-yield
//! table as reproduced there.
//!
//! <a id="ls1964"></a>**LS1964** — J. Lee and H. H. Seliger, "Quantum yield of the
//! ferrioxalate actinometer", J. Chem. Phys. 40, 519–523 (1964): Φ = 1.26 ± 0.03 (0.006 M)
//! and 1.20 ± 0.03 (0.15 M) at 365/366 nm.
//!
//! <a id="wz2020"></a>**WZ2020** — B. Wriedt and D. Ziegenbalg, "Common pitfalls in chemical
//! actinometry", J. Flow Chem. 10, 295–306 (2020), and the data table accompanying it (a
//! smooth 1 nm fit of the ferrioxalate Φ(λ)). Author list from memory.
//!
//! <a id="fz1993"></a>**FZ1993** — B. C. Faust and R. G. Zepp, "Photochemistry of aqueous
//! iron(III)-polycarboxylate complexes: roles in the chemistry of atmospheric and surface
//! waters", Environ. Sci. Technol. 27(12), 2517–2522 (1993): Φ ≈ 1.0 for Fe(ox)₃³⁻ at
//! 436 nm (abstract read only; citation details from memory).
//!
//! # Spectroscopy and air
//!
//! <a id="ssr1996"></a>**SSR1996** — C. J. Sansonetti, M. L. Salit and J. Reader,
//! "Wavelengths of spectral lines in mercury pencil lamps", Appl. Opt. 35(1), 74–77 (1996);
//! and the NIST Atomic Spectra Database (standard-air wavelengths of the Hg lines).
//!
//! <a id="ciddor1996"></a>**CIDDOR1996** — P. E. Ciddor, "Refractive index of air: new
//! equations for the visible and near infrared", Appl. Opt. 35(9), 1566–1573 (1996).
//!
//! <a id="edlen1966"></a>**EDLEN1966** — B. Edlén, "The refractive index of air", Metrologia
//! 2(2), 71–80 (1966).
//!
//! <a id="pr1972"></a>**PR1972** — E. R. Peck and K. Reeder, "Dispersion of air", J. Opt.
//! Soc. Am. 62(8), 958–962 (1972): n − 1 of standard air, 230–1690 nm.
//!
//! <a id="astmg173"></a>**ASTMG173** — ASTM G173-03(2020), *Standard Tables for Reference
//! Solar Spectral Irradiances: Direct Normal and Hemispherical on 37° Tilted Surface*.
//! Checked through `pvlib` (see `hosttests/refcheck/`).
//!
//! # Check tables made by outside libraries
//!
//! The committed tables under `hosttests/refcheck/` each name the library and version that
//! made them (scipy, pvlib, luxpy); `hosttests/tests/refcheck.rs` compares the crate with
//! them. Regenerating them is a manual step described in `DEVELOPERS.md`.
//!
//! # Values with no published source
//!
//! A fact of the trade with no authoritative source is marked `common practice, no source`
//! where it is used; a value computed here from exact definitions is marked "computed" with
//! the definition it follows from; a hypothetical worked example is marked as such.
