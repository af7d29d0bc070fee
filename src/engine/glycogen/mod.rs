//! Glycogen: how much an athlete's working muscles and liver hold, and how
//! eaten carbohydrate refills them between sessions.
//!
//! - [`stores`]: normal (fed, rested) capacity of the working muscles and the
//!   liver, and the state a session starts and ends in.
//! - [`balance`]: absorption, resting glucose use and resynthesis, advanced in
//!   short intervals by the week planner.
//!
//! A leaf of the engine: it depends on nothing else in it.

pub mod balance;
pub mod stores;
