use std::fmt;
use std::ops::{Div, Mul};

/// Exponents of the SI base units metre, kilogram, second, ampere, kelvin,
/// and of a converter code (`LSB`, which only a converter can turn into
/// volts or a fraction of its span), stored doubled so that `Hz^(1/2)` is
/// representable.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct Dim([i8; 6]);

const BASE: [&str; 6] = ["m", "kg", "s", "A", "K", "LSB"];

impl Dim {
    pub const NONE: Dim = Dim([0; 6]);
    pub const LENGTH: Dim = Dim([2, 0, 0, 0, 0, 0]);
    pub const MASS: Dim = Dim([0, 2, 0, 0, 0, 0]);
    pub const TIME: Dim = Dim([0, 0, 2, 0, 0, 0]);
    pub const CURRENT: Dim = Dim([0, 0, 0, 2, 0, 0]);
    pub const TEMPERATURE: Dim = Dim([0, 0, 0, 0, 2, 0]);
    pub const FREQUENCY: Dim = Dim([0, 0, -2, 0, 0, 0]);
    pub const ROOT_HERTZ: Dim = Dim([0, 0, -1, 0, 0, 0]);
    pub const POWER: Dim = Dim([4, 2, -6, 0, 0, 0]);
    pub const VOLTAGE: Dim = Dim([4, 2, -6, -2, 0, 0]);
    pub const RESISTANCE: Dim = Dim([4, 2, -6, -4, 0, 0]);
    pub const CAPACITANCE: Dim = Dim([-4, -2, 8, 4, 0, 0]);
    pub const FORCE: Dim = Dim([2, 2, -4, 0, 0, 0]);
    pub const PRESSURE: Dim = Dim([-2, 2, -4, 0, 0, 0]);
    /// V/√Hz
    pub const VOLTAGE_DENSITY: Dim = Dim([4, 2, -5, -2, 0, 0]);
    /// A/√Hz
    pub const CURRENT_DENSITY: Dim = Dim([0, 0, 1, 2, 0, 0]);
    /// W/K
    pub const DISSIPATION: Dim = Dim([4, 2, -6, 0, -2, 0]);
    /// A number of converter codes (`LSB`).
    pub const CODE: Dim = Dim([0, 0, 0, 0, 0, 2]);

    /// `self^n`, or None when a power leaves ±[`Dim::MAX_POWER`].
    pub fn checked_powi(self, n: i8) -> Option<Dim> {
        let mut out = [0i8; 6];
        for (o, e) in out.iter_mut().zip(self.0) {
            *o = bounded(e.checked_mul(n)?)?;
        }
        Some(Dim(out))
    }

    /// `self · rhs`, or None when a power leaves ±[`Dim::MAX_POWER`].
    pub fn checked_mul(self, rhs: Dim) -> Option<Dim> {
        let mut out = [0i8; 6];
        for (i, o) in out.iter_mut().enumerate() {
            *o = bounded(self.0[i].checked_add(rhs.0[i])?)?;
        }
        Some(Dim(out))
    }

    /// The largest power of a base unit a written unit may reach. No
    /// physical parameter needs more than a few; the bound leaves room for
    /// the named dimensions to be combined with any written one without
    /// leaving `i8`.
    pub const MAX_POWER: i8 = 16;

    /// For the named dimensions and small powers of bounded ones; a written
    /// unit goes through [`Dim::checked_powi`].
    pub fn powi(self, n: i8) -> Dim {
        let mut out = [0i8; 6];
        for (o, e) in out.iter_mut().zip(self.0) {
            // Written units stay within ±MAX_POWER, so a small power of one
            // cannot leave `i8`.
            *o = e
                .checked_mul(n)
                .unwrap_or_else(|| unreachable!("a bounded dimension's small power fits i8"));
        }
        Dim(out)
    }

    pub fn sqrt(self) -> Option<Dim> {
        self.0
            .iter()
            .all(|e| e % 2 == 0)
            .then(|| Dim(self.0.map(|e| e / 2)))
    }

    pub fn is_dimensionless(self) -> bool {
        self == Dim::NONE
    }

    /// The name and an example value for messages ("a voltage, such as `1.2 V`").
    pub fn name(self) -> DimName {
        DimName::of(self)
    }
}

impl Mul for Dim {
    type Output = Dim;
    /// For the named dimensions and bounded ones, never beyond `i8`; a
    /// written unit goes through [`Dim::checked_mul`], which keeps the
    /// bound.
    fn mul(self, rhs: Dim) -> Dim {
        let mut out = [0i8; 6];
        for (i, o) in out.iter_mut().enumerate() {
            // Written units stay within ±MAX_POWER and the named ones are
            // smaller, so a product of two cannot leave `i8`.
            *o = self.0[i]
                .checked_add(rhs.0[i])
                .unwrap_or_else(|| unreachable!("two bounded dimensions' product fits i8"));
        }
        Dim(out)
    }
}

impl Div for Dim {
    type Output = Dim;
    fn div(self, rhs: Dim) -> Dim {
        self * rhs.powi(-1)
    }
}

/// A doubled exponent within ±[`Dim::MAX_POWER`].
fn bounded(doubled: i8) -> Option<i8> {
    (doubled.unsigned_abs() <= 2 * Dim::MAX_POWER.unsigned_abs()).then_some(doubled)
}

/// Base-unit spelling, e.g. `kg·m^2·s^-3·A^-1`, for dimensions without a name.
impl fmt::Display for Dim {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.is_dimensionless() {
            return f.write_str("1");
        }
        let mut first = true;
        for (i, &e) in self.0.iter().enumerate() {
            if e == 0 {
                continue;
            }
            if !first {
                f.write_str("·")?;
            }
            first = false;
            f.write_str(BASE[i])?;
            if e != 2 {
                if e % 2 == 0 {
                    write!(f, "^{}", e / 2)?;
                } else {
                    write!(f, "^({}/2)", e)?;
                }
            }
        }
        Ok(())
    }
}

/// What a dimension is called in messages, with a unit and an example.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DimName {
    pub noun: &'static str,
    pub unit: &'static str,
    pub example: &'static str,
}

impl DimName {
    pub fn of(dim: Dim) -> DimName {
        let n = |noun, unit, example| DimName {
            noun,
            unit,
            example,
        };
        let per_kelvin = |d: Dim| d / Dim::TEMPERATURE;
        let per_root_hz = |d: Dim| d / Dim::ROOT_HERTZ;
        match dim {
            d if d == Dim::NONE => n("a plain number", "", "4"),
            d if d == Dim::VOLTAGE => n("a voltage", "V", "1.2 V"),
            d if d == Dim::CURRENT => n("a current", "A", "250 uA"),
            d if d == Dim::RESISTANCE => n("a resistance", "ohm", "4.7 kohm"),
            d if d == Dim::POWER => n("a power", "W", "10 mW"),
            d if d == Dim::CAPACITANCE => n("a capacitance", "F", "1 uF"),
            d if d == Dim::FREQUENCY => n("a frequency", "Hz", "20 Hz"),
            d if d == Dim::TIME => n("a time", "s", "10 s"),
            d if d == Dim::TEMPERATURE => n("a temperature", "K", "25 degC"),
            d if d == Dim::FORCE => n("a force", "N", "500 N"),
            d if d == Dim::MASS => n("a mass", "kg", "25 kg"),
            d if d == Dim::PRESSURE => n("a pressure", "Pa", "10 bar"),
            d if d == Dim::LENGTH => n("a length", "m", "2 m"),
            d if d == Dim::CODE => n("a number of converter codes", "LSB", "2 LSB"),
            d if d == per_kelvin(Dim::NONE) => n("a temperature coefficient", "1/K", "15 ppm/K"),
            d if d == per_kelvin(Dim::VOLTAGE) => n("a voltage per kelvin", "V/K", "10 mV/K"),
            d if d == per_kelvin(Dim::CURRENT) => n("a current per kelvin", "A/K", "1 uA/K"),
            d if d == per_kelvin(Dim::POWER) => n("a dissipation constant", "W/K", "2 mW/K"),
            d if d == Dim::TEMPERATURE / Dim::POWER => n("a thermal resistance", "K/W", "0.5 K/mW"),
            d if d == per_root_hz(Dim::VOLTAGE) => {
                n("a voltage noise density", "V/√Hz", "12 nV/rtHz")
            }
            d if d == per_root_hz(Dim::CURRENT) => {
                n("a current noise density", "A/√Hz", "0.1 pA/rtHz")
            }
            _ => n("a quantity", "", ""),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::Dim;

    #[test]
    fn derived_dimensions_compose() {
        assert_eq!(Dim::VOLTAGE / Dim::CURRENT, Dim::RESISTANCE);
        assert_eq!(Dim::VOLTAGE * Dim::CURRENT, Dim::POWER);
        assert_eq!(Dim::ROOT_HERTZ.powi(2), Dim::FREQUENCY);
        assert_eq!(Dim::FREQUENCY.sqrt(), Some(Dim::ROOT_HERTZ));
        assert_eq!(Dim::RESISTANCE * Dim::CAPACITANCE, Dim::TIME);
    }

    #[test]
    fn powers_beyond_the_bound_are_refused() {
        let hz4 = Dim::FREQUENCY.powi(4);
        let mut d = Dim::NONE;
        for _ in 0..4 {
            d = d.checked_mul(hz4).expect("Hz^16 is within the bound");
        }
        assert_eq!(d.checked_mul(hz4), None, "Hz^20 is beyond it");
        assert_eq!(Dim::FREQUENCY.checked_powi(17), None);
        assert_eq!(
            Dim::CODE.checked_powi(-2),
            Some(Dim::NONE / Dim::CODE / Dim::CODE)
        );
    }

    #[test]
    fn half_powers_display() {
        assert_eq!(
            (Dim::VOLTAGE / Dim::ROOT_HERTZ).to_string(),
            "m^2·kg·s^(-5/2)·A^-1"
        );
    }
}
