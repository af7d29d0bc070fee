//! Citations used in more than one place, so every explanation names a
//! source in the same words.

/// The joint position statement behind the daily and session targets.
pub const THOMAS_2016: &str = "Thomas, Erdman & Burke (2016), Nutrition and Athletic Performance, J Acad Nutr Diet 116:501 / Med Sci Sports Exerc 48:543";
