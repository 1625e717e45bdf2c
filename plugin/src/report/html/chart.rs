//! The small typed layer the report's SVG is written through. Markup itself is written
//! with `maud` (tags checked when the crate compiles, every value escaped), so this layer
//! only holds what a chart needs beyond tags: coordinates that print the same on every
//! platform ([`Px`]), the map from data to pixels ([`Linear`]), tick positions, and the
//! width of a label in the report's monospace font (no font metrics are available to a
//! page without scripts, so labels are sized from their length and clipped).

use std::fmt;

/// A coordinate or length in CSS pixels, printed to one decimal with a trailing `.0`
/// dropped, so that the page is byte for byte the same wherever it is generated.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
pub struct Px(pub f64);

impl fmt::Display for Px {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let tenths = (self.0 * 10.0).round() as i64;
        if tenths % 10 == 0 {
            write!(f, "{}", tenths / 10)
        } else {
            let sign = if tenths < 0 { "-" } else { "" };
            write!(f, "{sign}{}.{}", tenths.abs() / 10, tenths.abs() % 10)
        }
    }
}

/// A linear map from a data interval onto a pixel interval.
#[derive(Clone, Copy, Debug)]
pub struct Linear {
    from: (f64, f64),
    to: (f64, f64),
}

impl Linear {
    /// Maps `from.0..from.1` onto `to.0..to.1` (either may run backwards, as a y axis
    /// does).
    pub fn new(from: (f64, f64), to: (f64, f64)) -> Linear {
        Linear { from, to }
    }

    /// The pixel position of a data value.
    pub fn at(&self, x: f64) -> Px {
        let span = self.from.1 - self.from.0;
        let t = if span == 0.0 {
            0.0
        } else {
            (x - self.from.0) / span
        };
        Px(self.to.0 + t * (self.to.1 - self.to.0))
    }
}

/// Whole-number ticks from 0 to at most `max`, about `n` of them, spaced by a "nice"
/// step of 1, 2 or 5 times a power of ten (Heckbert 1990, "Nice numbers for graph
/// labels", Graphics Gems I).
pub fn ticks(max: u64, n: u64) -> Vec<u64> {
    let raw = (max as f64 / n.max(1) as f64).max(1.0);
    let power = 10f64.powi(raw.log10().floor() as i32);
    let frac = raw / power;
    let nice = if frac <= 1.0 {
        1.0
    } else if frac <= 2.0 {
        2.0
    } else if frac <= 5.0 {
        5.0
    } else {
        10.0
    };
    let step = ((nice * power).round() as u64).max(1);
    (0..=max / step).map(|i| i * step).collect()
}

/// Width of one character of the report's monospace labels at [`FONT`] pixels: 0.6 em,
/// the advance of the common monospace faces (common practice).
pub const CHAR_W: f64 = 6.6;

/// Font size of chart labels, pixels.
pub const FONT: f64 = 11.0;

/// A label cut to `max` characters with an ellipsis; the full text goes in a `<title>`.
pub fn clip(s: &str, max: usize) -> String {
    if s.chars().count() <= max {
        s.to_string()
    } else {
        let mut out: String = s.chars().take(max.saturating_sub(1)).collect();
        out.push('…');
        out
    }
}

/// A share as a whole percentage that never rounds a mixed result to an extreme: a
/// pass rate of 99.6% prints as `>99%`, not `100%`, which would read as "never failed".
pub fn percent(x: f64) -> String {
    if x > 0.0 && x < 0.01 {
        "<1%".to_string()
    } else if x > 0.99 && x < 1.0 {
        ">99%".to_string()
    } else {
        format!("{:.0}%", x * 100.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pixels_print_to_one_decimal() {
        assert_eq!(Px(3.0).to_string(), "3");
        assert_eq!(Px(3.04).to_string(), "3");
        assert_eq!(Px(3.06).to_string(), "3.1");
        assert_eq!(Px(-0.5).to_string(), "-0.5");
        assert_eq!(Px(-0.04).to_string(), "0");
        assert_eq!(Px(120.25).to_string(), "120.3");
    }

    #[test]
    fn linear_maps_ends_and_middle() {
        let y = Linear::new((0.0, 1.0), (200.0, 10.0));
        assert_eq!(y.at(0.0), Px(200.0));
        assert_eq!(y.at(1.0), Px(10.0));
        assert_eq!(y.at(0.5), Px(105.0));
        assert_eq!(Linear::new((2.0, 2.0), (5.0, 9.0)).at(2.0), Px(5.0));
    }

    #[test]
    fn ticks_use_nice_steps() {
        // Heckbert (1990): steps of 1, 2, 5 × 10^k
        assert_eq!(ticks(27, 6), vec![0, 5, 10, 15, 20, 25]);
        assert_eq!(ticks(9, 10), (0..=9).collect::<Vec<_>>());
        assert_eq!(ticks(1000, 5), vec![0, 200, 400, 600, 800, 1000]);
        assert_eq!(ticks(0, 5), vec![0]);
        for max in 1..500 {
            let t = ticks(max, 6);
            let step = t.get(1).map_or(1, |s| s - t[0]);
            let lead = step / 10u64.pow(step.ilog10());
            assert!([1, 2, 5].contains(&lead), "{max}: {t:?}");
            assert!(t.len() >= 2 && t.len() <= 13, "{max}: {t:?}");
        }
    }

    #[test]
    fn percentages_never_round_to_a_false_extreme() {
        assert_eq!(percent(0.0), "0%");
        assert_eq!(percent(1.0), "100%");
        assert_eq!(percent(0.996), ">99%");
        assert_eq!(percent(0.004), "<1%");
        assert_eq!(percent(7.0 / 45.0), "16%");
    }

    #[test]
    fn long_labels_are_clipped_with_an_ellipsis() {
        assert_eq!(clip("Flush::EveryFrame", 8), "Flush::…");
        assert_eq!(clip("short", 8), "short");
    }
}
