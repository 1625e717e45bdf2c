//! The report's colours, chosen to be read by everyone: pass rates on cividis, a
//! sequential scale built so that its lightness rises steadily from dark blue to yellow
//! and reads the same with the common colour-vision deficiencies and in greyscale
//! (Nuñez, Anderton & Renslow 2018, "Optimizing colormaps with consideration for color
//! vision deficiency to enable accurate interpretation of scientific data", PLOS ONE
//! 13(7): e0199239). The scale comes from `colorous` (d3-scale-chromatic's tables), not
//! from numbers of our own. Text on a coloured cell is black or white, whichever
//! contrasts more by the WCAG 2.1 definitions, and no state is told by colour alone:
//! every cell also carries its figure or a mark.

use std::fmt;

/// An sRGB colour.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Rgb(pub u8, pub u8, pub u8);

impl fmt::Display for Rgb {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "#{:02x}{:02x}{:02x}", self.0, self.1, self.2)
    }
}

impl Rgb {
    /// Relative luminance (WCAG 2.1, "relative luminance": sRGB channels linearised,
    /// weighted 0.2126, 0.7152, 0.0722).
    pub fn luminance(self) -> f64 {
        let lin = |c: u8| {
            let c = f64::from(c) / 255.0;
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * lin(self.0) + 0.7152 * lin(self.1) + 0.0722 * lin(self.2)
    }
}

/// Black.
pub const BLACK: Rgb = Rgb(0, 0, 0);
/// White.
pub const WHITE: Rgb = Rgb(255, 255, 255);
/// The outline of a suspect: vermillion from the palette of Wong (2011, "Points of
/// view: Color blindness", Nature Methods 8: 441), far in lightness from both ends of
/// cividis, so it stands out on a dark (failing) cell and on a light (passing) one.
pub const SUSPECT: Rgb = Rgb(0xd5, 0x5e, 0x00);
/// Cells no allowed row contains (ruled out by excludes).
pub const EXCLUDED: Rgb = Rgb(0xe6, 0xe6, 0xe6);
/// Lines of the "not run" hatching.
pub const NOT_RUN: Rgb = Rgb(0x8c, 0x8c, 0x8c);

/// Contrast ratio of two colours (WCAG 2.1: (L1 + 0.05) / (L2 + 0.05), lighter over
/// darker), from 1 to 21.
pub fn contrast(a: Rgb, b: Rgb) -> f64 {
    let (x, y) = (a.luminance(), b.luminance());
    (x.max(y) + 0.05) / (x.min(y) + 0.05)
}

/// The colour of a pass rate between 0 (every run failed: dark blue) and 1 (every run
/// passed: yellow).
pub fn pass_rate(rate: f64) -> Rgb {
    let c = colorous::CIVIDIS.eval_continuous(rate.clamp(0.0, 1.0));
    Rgb(c.r, c.g, c.b)
}

/// Black or white, whichever reads better on `background`.
pub fn ink_on(background: Rgb) -> Rgb {
    if contrast(BLACK, background) >= contrast(WHITE, background) {
        BLACK
    } else {
        WHITE
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn contrast_follows_the_wcag_definition() {
        // WCAG 2.1, "contrast ratio": ranges from 1:1 to 21:1 (black on white)
        assert!((contrast(BLACK, WHITE) - 21.0).abs() < 1e-9);
        assert!((contrast(SUSPECT, SUSPECT) - 1.0).abs() < 1e-9);
        // WCAG 2.1 technique G18 names #767676 on white as just above 4.5:1 (from memory)
        let grey = Rgb(0x76, 0x76, 0x76);
        let c = contrast(grey, WHITE);
        assert!(c > 4.5 && c < 4.6, "{c}");
    }

    #[test]
    fn cividis_runs_from_dark_blue_to_yellow_with_rising_lightness() {
        // the end points of cividis as published with matplotlib's table of the scale
        // (Nuñez et al. 2018): (0, 34, 78) and (254, 232, 56), values from memory;
        // d3's polynomial fit (which `colorous` evaluates) stays within a few steps
        let near = |a: Rgb, b: Rgb| {
            (i16::from(a.0) - i16::from(b.0)).abs() <= 16
                && (i16::from(a.1) - i16::from(b.1)).abs() <= 16
                && (i16::from(a.2) - i16::from(b.2)).abs() <= 16
        };
        assert!(near(pass_rate(0.0), Rgb(0, 34, 78)), "{}", pass_rate(0.0));
        assert!(near(pass_rate(1.0), Rgb(254, 232, 56)), "{}", pass_rate(1.0));
        // the design goal of the scale: lightness rises monotonically, so rank order
        // survives greyscale printing and colour-vision deficiencies
        let lum: Vec<f64> = (0..=100)
            .map(|i| pass_rate(f64::from(i) / 100.0).luminance())
            .collect();
        assert!(lum.windows(2).all(|w| w[1] >= w[0] - 1e-3), "{lum:?}");
        assert!(lum[100] > lum[0] * 10.0);
    }

    #[test]
    fn text_on_every_cell_meets_the_body_text_contrast() {
        // WCAG 2.1 success criterion 1.4.3 asks 3:1 for large text and 4.5:1 for body
        // text; the cell figures are small bold text, so we ask 4.5 everywhere
        for i in 0..=100 {
            let bg = pass_rate(f64::from(i) / 100.0);
            let c = contrast(ink_on(bg), bg);
            assert!(c >= 4.5, "{bg}: {c}");
        }
        assert!(contrast(ink_on(EXCLUDED), EXCLUDED) >= 4.5);
    }
}
