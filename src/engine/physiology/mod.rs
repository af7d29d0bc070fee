//! Session physiology: who the athlete is (VO2max, HRmax, glycogen capacity)
//! and what one session costs them, through time.
//!
//! - [`athlete`]: a profile resolved into VO2max, HRmax and glycogen capacity,
//!   with the estimates used to fill the gaps (field tests, defaults).
//! - [`catalogue`]: activities with Compendium codes and METs.
//! - [`intensity`]: every intensity form converted to oxygen uptake.
//! - [`gas_exchange`]: Weir, the Zuntz/Lusk NPRQ table, Frayn and Jeukendrup &
//!   Wallis substrate equations, energy densities.
//! - [`fuel_mix`]: the carbohydrate share of energy by intensity, time,
//!   training status and muscle glycogen.
//! - [`session`]: one athlete's session simulated minute by minute.
//!
//! Depends on [`crate::engine::glycogen::stores`] for stores; nothing here knows about days
//! or weeks.

pub mod athlete;
pub mod catalogue;
pub mod fuel_mix;
pub mod gas_exchange;
pub mod intensity;
pub mod session;
