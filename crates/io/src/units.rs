//! Units at the edge of the program: case-file lengths and quantities written
//! with their unit ("6.2 GHz", "1.55 um"), converted to SI on the way in.

use std::fmt;
use std::str::FromStr;

/// Speed of light in vacuum, m/s (exact by the SI definition of the metre).
pub const SPEED_OF_LIGHT: f64 = 299_792_458.0;

/// Length unit of a case file (`[units] length`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum LengthUnit {
    /// Nanometre, 1e-9 m (`"nm"`).
    Nanometre,
    /// Micrometre, 1e-6 m (`"um"`, also `"µm"`).
    Micrometre,
    /// Millimetre, 1e-3 m (`"mm"`).
    Millimetre,
    /// Metre (`"m"`).
    Metre,
}

impl LengthUnit {
    /// Every unit, smallest first.
    pub const ALL: [LengthUnit; 4] = [
        LengthUnit::Nanometre,
        LengthUnit::Micrometre,
        LengthUnit::Millimetre,
        LengthUnit::Metre,
    ];

    /// Metres per unit.
    pub fn metres(self) -> f64 {
        match self {
            LengthUnit::Nanometre => 1e-9,
            LengthUnit::Micrometre => 1e-6,
            LengthUnit::Millimetre => 1e-3,
            LengthUnit::Metre => 1.0,
        }
    }

    /// The symbol used in case files and on plot axes (ASCII: `um`, not `µm`).
    pub fn symbol(self) -> &'static str {
        match self {
            LengthUnit::Nanometre => "nm",
            LengthUnit::Micrometre => "um",
            LengthUnit::Millimetre => "mm",
            LengthUnit::Metre => "m",
        }
    }

    /// Converts a value in this unit to metres.
    pub fn to_metres(self, value: f64) -> f64 {
        value * self.metres()
    }

    /// Converts a value in metres to this unit.
    pub fn from_metres(self, metres: f64) -> f64 {
        metres / self.metres()
    }
}

impl fmt::Display for LengthUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}

impl FromStr for LengthUnit {
    type Err = UnitError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim() {
            "nm" => Ok(LengthUnit::Nanometre),
            "um" | "µm" | "μm" => Ok(LengthUnit::Micrometre),
            "mm" => Ok(LengthUnit::Millimetre),
            "m" => Ok(LengthUnit::Metre),
            other => Err(UnitError::UnknownUnit {
                unit: other.to_string(),
                expected: "a length unit: nm, um, mm, m",
            }),
        }
    }
}

/// Frequency unit accepted in quantities.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum FrequencyUnit {
    /// Hertz.
    Hz,
    /// Kilohertz, 1e3 Hz.
    KHz,
    /// Megahertz, 1e6 Hz.
    MHz,
    /// Gigahertz, 1e9 Hz.
    GHz,
    /// Terahertz, 1e12 Hz.
    THz,
}

impl FrequencyUnit {
    /// Every unit, smallest first.
    pub const ALL: [FrequencyUnit; 5] = [
        FrequencyUnit::Hz,
        FrequencyUnit::KHz,
        FrequencyUnit::MHz,
        FrequencyUnit::GHz,
        FrequencyUnit::THz,
    ];

    /// Hertz per unit.
    pub fn hertz(self) -> f64 {
        match self {
            FrequencyUnit::Hz => 1.0,
            FrequencyUnit::KHz => 1e3,
            FrequencyUnit::MHz => 1e6,
            FrequencyUnit::GHz => 1e9,
            FrequencyUnit::THz => 1e12,
        }
    }

    /// The symbol (`Hz`, `kHz`, `MHz`, `GHz`, `THz`).
    pub fn symbol(self) -> &'static str {
        match self {
            FrequencyUnit::Hz => "Hz",
            FrequencyUnit::KHz => "kHz",
            FrequencyUnit::MHz => "MHz",
            FrequencyUnit::GHz => "GHz",
            FrequencyUnit::THz => "THz",
        }
    }

    /// The unit in which `hertz` reads best (value between 1 and 1000 where possible).
    pub fn best_for(hertz: f64) -> FrequencyUnit {
        let a = hertz.abs();
        *FrequencyUnit::ALL
            .iter()
            .rev()
            .find(|u| a >= u.hertz())
            .unwrap_or(&FrequencyUnit::Hz)
    }
}

/// A physical quantity read from text, in SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Quantity {
    /// A frequency, Hz.
    Frequency(f64),
    /// A length, metres.
    Length(f64),
}

/// Why a quantity or unit could not be read.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum UnitError {
    /// The text has a number but no unit.
    #[error("'{text}' has no unit")]
    MissingUnit {
        /// The text as given.
        text: String,
    },
    /// The unit is not one we know.
    #[error("unknown unit '{unit}' (expected {expected})")]
    UnknownUnit {
        /// The unit as given.
        unit: String,
        /// What would have been accepted.
        expected: &'static str,
    },
    /// The number part does not parse or is not finite.
    #[error("'{text}' does not start with a finite number")]
    BadNumber {
        /// The text as given.
        text: String,
    },
}

/// All units [`parse_quantity`] accepts, for messages.
pub const QUANTITY_UNITS: &str = "Hz, kHz, MHz, GHz, THz, nm, um, mm, m";

/// Reads a number followed by a unit, e.g. `"6.2 GHz"`, `"1.55 um"`, `"1550nm"`.
///
/// Units are case-sensitive (`mm` is not `Mm`); a wrong case gets a hint in the error.
pub fn parse_quantity(text: &str) -> Result<Quantity, UnitError> {
    let t = text.trim();
    let split = t
        .char_indices()
        .find(|&(i, c)| {
            c.is_alphabetic() && !((c == 'e' || c == 'E') && is_exponent(t, i))
                || c == 'µ'
                || c == 'μ'
        })
        .map(|(i, _)| i)
        .unwrap_or(t.len());
    let (num, unit) = (t[..split].trim(), t[split..].trim());
    let value: f64 = num.parse().map_err(|_| UnitError::BadNumber {
        text: text.to_string(),
    })?;
    if !value.is_finite() {
        return Err(UnitError::BadNumber {
            text: text.to_string(),
        });
    }
    if unit.is_empty() {
        return Err(UnitError::MissingUnit {
            text: text.to_string(),
        });
    }
    if let Some(u) = FrequencyUnit::ALL.iter().find(|u| u.symbol() == unit) {
        return Ok(Quantity::Frequency(value * u.hertz()));
    }
    if let Ok(u) = unit.parse::<LengthUnit>() {
        return Ok(Quantity::Length(u.to_metres(value)));
    }
    Err(UnitError::UnknownUnit {
        unit: unit.to_string(),
        expected: QUANTITY_UNITS_HINT,
    })
}

const QUANTITY_UNITS_HINT: &str =
    "one of Hz, kHz, MHz, GHz, THz (frequency) or nm, um, mm, m (free-space wavelength); units are case-sensitive";

/// True when the `e`/`E` at byte `i` is an exponent marker: digits (or a
/// point) before it and a digit or sign after it.
fn is_exponent(t: &str, i: usize) -> bool {
    let before = t[..i].chars().last();
    let after = t[i + 1..].chars().next();
    matches!(before, Some(c) if c.is_ascii_digit() || c == '.')
        && matches!(after, Some(c) if c.is_ascii_digit() || c == '-' || c == '+')
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_unit_converts() {
        // Source: SI prefixes (BIPM SI Brochure, 9th ed., Table 7).
        let cases = [
            ("2 Hz", Quantity::Frequency(2.0)),
            ("2 kHz", Quantity::Frequency(2e3)),
            ("2 MHz", Quantity::Frequency(2e6)),
            ("6.2 GHz", Quantity::Frequency(6.2e9)),
            ("193.4THz", Quantity::Frequency(193.4e12)),
            ("1550 nm", Quantity::Length(1550e-9)),
            ("1.55 um", Quantity::Length(1.55e-6)),
            ("1.55 µm", Quantity::Length(1.55e-6)),
            ("48.4 mm", Quantity::Length(48.4e-3)),
            ("0.5 m", Quantity::Length(0.5)),
            ("1e-3 m", Quantity::Length(1e-3)),
            ("2.5E9 Hz", Quantity::Frequency(2.5e9)),
        ];
        for (text, want) in cases {
            let got = parse_quantity(text).unwrap();
            let (g, w) = match (got, want) {
                (Quantity::Frequency(g), Quantity::Frequency(w)) => (g, w),
                (Quantity::Length(g), Quantity::Length(w)) => (g, w),
                _ => panic!("{text}: wrong kind {got:?}"),
            };
            assert!((g - w).abs() <= 1e-12 * w.abs(), "{text}: {g} vs {w}");
        }
        for u in LengthUnit::ALL {
            assert_eq!(u.symbol().parse::<LengthUnit>().unwrap(), u);
            assert!((u.from_metres(u.to_metres(3.0)) - 3.0).abs() < 1e-12);
        }
    }

    #[test]
    fn bad_units_are_named() {
        assert!(matches!(
            parse_quantity("6.2"),
            Err(UnitError::MissingUnit { .. })
        ));
        assert!(matches!(
            parse_quantity("6.2 ghz"),
            Err(UnitError::UnknownUnit { unit, .. }) if unit == "ghz"
        ));
        assert!(matches!(
            parse_quantity("6.2 furlong"),
            Err(UnitError::UnknownUnit { .. })
        ));
        assert!(matches!(
            parse_quantity("GHz"),
            Err(UnitError::BadNumber { .. })
        ));
        assert!(matches!(
            parse_quantity("inf GHz"),
            Err(UnitError::BadNumber { .. })
        ));
        assert!("inch".parse::<LengthUnit>().is_err());
    }

    #[test]
    fn best_frequency_unit() {
        assert_eq!(FrequencyUnit::best_for(6.2e9), FrequencyUnit::GHz);
        assert_eq!(FrequencyUnit::best_for(999.0), FrequencyUnit::Hz);
        assert_eq!(FrequencyUnit::best_for(2e14), FrequencyUnit::THz);
    }
}
