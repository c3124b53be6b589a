//! What a loss costs in a year: steam lost through a leak or a failed trap, or heat lost from a
//! line, turned into the steam, boiler heat, fuel energy and money it takes to make it good.
//!
//! Units: flows kg/s, heat kW, h kJ/kg, p MPa, T K; yearly masses kg, yearly energies kJ; prices
//! currency-neutral, per kJ of fuel or per kg of steam.
//!
//! Model (stated in every result): steam lost is replaced by make-up water at `makeup_t`, pumped
//! to the steam pressure and raised to the lost steam's enthalpy in the boiler, so the boiler heat
//! is m (h_steam - h(p_steam, makeup_t)); heat lost from a line is replaced by the boiler one for
//! one; the fuel is the boiler heat over the boiler efficiency. Feed-pump work, deaerator venting,
//! blowdown and water treatment are not counted. A price per mass of steam is applied to the steam
//! lost (for a heat loss, to the steam that carries that heat: Q / (h_steam - h_makeup)).
//!
//! Invariant: the yearly amounts are the rates times `hours_per_year` times 3600 s, nothing more.

use super::pt;
use crate::error::{Bound, Error, Result};
use crate::water::state::Phase;

/// How the loss is priced.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Price {
    /// Currency per kJ of fuel (higher or lower heating value, as the boiler efficiency is
    /// stated).
    PerFuelEnergy(f64),
    /// Currency per kg of steam.
    PerSteamMass(f64),
}

/// The yearly operating basis of a costing.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Costing {
    /// Hours per year the loss runs, h (0 to 8784).
    pub hours_per_year: f64,
    /// Price, if any.
    pub price: Option<Price>,
    /// Boiler efficiency (fuel to steam), 0 < eta <= 1, if known.
    pub boiler_efficiency: Option<f64>,
    /// Make-up water temperature, K.
    pub makeup_t: f64,
}

/// Hours in a leap year: the largest `hours_per_year` accepted.
pub const HOURS_MAX: f64 = 8784.0;

/// A loss over a year.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct YearlyLoss {
    /// Steam lost (or, for a heat loss, the steam that carries that heat), kg per year.
    pub steam: f64,
    /// Boiler heat to make it good, kJ per year.
    pub heat: f64,
    /// Fuel energy, kJ per year (with a boiler efficiency).
    pub fuel: Option<f64>,
    /// Cost per year (with a price; a fuel price needs the boiler efficiency).
    pub cost: Option<f64>,
    /// Enthalpy of the make-up water used, kJ/kg.
    pub makeup_h: f64,
}

impl Costing {
    /// Checks the basis.
    pub fn check(&self) -> Result<()> {
        Error::check_finite("hours_per_year", self.hours_per_year)?;
        if !(0.0..=HOURS_MAX).contains(&self.hours_per_year) {
            let (limit, bound) = if self.hours_per_year < 0.0 {
                (0.0, Bound::Below)
            } else {
                (HOURS_MAX, Bound::Above)
            };
            return Err(Error::out_of_range(
                "hours_per_year",
                self.hours_per_year,
                limit,
                "h",
                bound,
                "a year",
            ));
        }
        if let Some(eta) = self.boiler_efficiency {
            Error::check_finite("boiler_efficiency", eta)?;
            if eta <= 0.0 || eta > 1.0 {
                return Err(Error::out_of_range(
                    "boiler_efficiency",
                    eta,
                    if eta <= 0.0 { 0.0 } else { 1.0 },
                    "1",
                    if eta <= 0.0 {
                        Bound::Below
                    } else {
                        Bound::Above
                    },
                    "an efficiency",
                ));
            }
        }
        match self.price {
            Some(Price::PerFuelEnergy(c)) | Some(Price::PerSteamMass(c)) => {
                Error::check_finite("price", c)?;
                if c < 0.0 {
                    return Err(Error::out_of_range(
                        "price",
                        c,
                        0.0,
                        "1",
                        Bound::Below,
                        "a price",
                    ));
                }
            }
            None => {}
        }
        if matches!(self.price, Some(Price::PerFuelEnergy(_))) && self.boiler_efficiency.is_none() {
            return Err(Error::invalid(
                "a fuel_cost needs the boiler_efficiency (fuel energy = boiler heat / efficiency)",
            ));
        }
        Error::check_finite("makeup_T", self.makeup_t)?;
        Ok(())
    }

    /// Enthalpy of the make-up water at the steam pressure `p` (MPa), kJ/kg; it must be liquid.
    pub fn makeup_h(&self, p: f64) -> Result<f64> {
        let st = pt(p, self.makeup_t)?;
        if st.phase != Phase::Liquid {
            return Err(Error::infeasible(format!(
                "make-up water at T = {} K is not liquid at the steam pressure {} MPa",
                self.makeup_t, p
            )));
        }
        Ok(st.props.h)
    }

    fn seconds(&self) -> f64 {
        self.hours_per_year * 3600.0
    }

    fn finish(&self, steam: f64, heat: f64, makeup_h: f64) -> YearlyLoss {
        let fuel = self.boiler_efficiency.map(|eta| heat / eta);
        let cost = match self.price {
            Some(Price::PerFuelEnergy(c)) => fuel.map(|f| f * c),
            Some(Price::PerSteamMass(c)) => Some(steam * c),
            None => None,
        };
        YearlyLoss {
            steam,
            heat,
            fuel,
            cost,
            makeup_h,
        }
    }

    /// The yearly cost of losing `flow` kg/s of steam of enthalpy `h_steam` (kJ/kg) at pressure
    /// `p_steam` (MPa).
    pub fn steam_loss(&self, flow: f64, h_steam: f64, p_steam: f64) -> Result<YearlyLoss> {
        self.check()?;
        let hm = self.makeup_h(p_steam)?;
        let steam = flow * self.seconds();
        let heat = steam * (h_steam - hm).max(0.0);
        Ok(self.finish(steam, heat, hm))
    }

    /// The yearly cost of losing `heat` kW from a line carrying steam or water of enthalpy
    /// `h_steam` (kJ/kg) at pressure `p_steam` (MPa).
    pub fn heat_loss(&self, heat: f64, h_steam: f64, p_steam: f64) -> Result<YearlyLoss> {
        self.check()?;
        let hm = self.makeup_h(p_steam)?;
        let q = heat * self.seconds();
        let dh = h_steam - hm;
        let steam = if dh > 0.0 { q / dh } else { 0.0 };
        Ok(self.finish(steam, q, hm))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn yearly_arithmetic() {
        let c = Costing {
            hours_per_year: 8000.0,
            price: Some(Price::PerFuelEnergy(30.0 / 3.6e6)),
            boiler_efficiency: Some(0.8),
            makeup_t: 288.15,
        };
        let y = c.steam_loss(0.01, 2800.0, 1.0).unwrap();
        assert!((y.steam - 0.01 * 8000.0 * 3600.0).abs() < 1e-9);
        let heat = y.steam * (2800.0 - y.makeup_h);
        assert!((y.heat - heat).abs() < 1e-6);
        assert!((y.fuel.unwrap() - heat / 0.8).abs() < 1e-6);
        assert!((y.cost.unwrap() - heat / 0.8 * 30.0 / 3.6e6).abs() < 1e-9);
        // the make-up water at 15 degC and 1 MPa: about 63.9 kJ/kg (steam tables; common
        // practice, no source)
        assert!((y.makeup_h - 63.9).abs() < 0.2, "{}", y.makeup_h);
        let bad = Costing {
            boiler_efficiency: None,
            ..c
        };
        assert!(bad.steam_loss(0.01, 2800.0, 1.0).is_err());
        let bad = Costing {
            hours_per_year: 9000.0,
            ..c
        };
        assert!(bad.check().is_err());
    }
}
