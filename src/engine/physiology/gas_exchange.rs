//! Gas exchange: from oxygen uptake and the fuel mix to energy and grams.
//!
//! Guided tour:
//! - [`weir_kcal_per_min`]: energy expenditure from VO2 and VCO2 (Weir 1949).
//! - The non-protein respiratory quotient (NPRQ) table of Zuntz (1901) as
//!   printed by Lusk (1924): [`kcal_per_litre_oxygen`],
//!   [`carbohydrate_energy_share`] and the inverse [`nprq_from_carbohydrate_share`],
//!   linearly interpolated between the printed rows.
//! - Substrate oxidation from gas exchange: [`frayn_oxidation`] (Frayn 1983) and
//!   [`jeukendrup_wallis_oxidation`] (Jeukendrup & Wallis 2005).
//! - Energy densities used to turn carbohydrate and fat energy into grams:
//!   [`CARBOHYDRATE_KCAL_PER_G`] and [`FAT_KCAL_PER_G`].
//!
//! How the densities are chosen: the session model takes energy from the
//! Zuntz/Lusk table (kcal per litre of O2 at the model's NPRQ), so the grams
//! must come from the same table. Its end rows give the energy per litre of O2
//! for pure carbohydrate (5.047 kcal/L, NPRQ 1.00) and pure fat (4.686 kcal/L,
//! NPRQ 0.707). Multiplying by the oxygen each gram needs gives the density:
//! - carbohydrate as glycogen (C6H10O5, 162.14 g/mol, 6 mol O2 per glucosyl
//!   unit at 22.4 L/mol): 0.829 L O2/g, so 5.047 x 0.829 = 4.18 kcal/g, the
//!   usual heat of combustion of glycogen and starch;
//! - fat: 2.019 L O2/g (Lusk 1924, mixed triglyceride; `from memory`), so
//!   4.686 x 2.019 = 9.46 kcal/g.
//!
//! These grams agree with the Jeukendrup & Wallis (2005) exercise equations
//! within a few percent over NPRQ 0.80-0.95 (tested below).

use serde::Serialize;
use utoipa::ToSchema;

/// Litres of O2 per gram of glycogen (6 x 22.4 L / 162.14 g per glucosyl unit).
pub const OXYGEN_L_PER_G_GLYCOGEN: f64 = 6.0 * 22.4 / 162.14;
/// Litres of O2 per gram of mixed fat (Lusk 1924; `from memory`).
pub const OXYGEN_L_PER_G_FAT: f64 = 2.019;
/// Energy density of carbohydrate (as glycogen) matching the Zuntz/Lusk table.
pub const CARBOHYDRATE_KCAL_PER_G: f64 = 5.047 * OXYGEN_L_PER_G_GLYCOGEN;
/// Energy density of fat matching the Zuntz/Lusk table.
pub const FAT_KCAL_PER_G: f64 = 4.686 * OXYGEN_L_PER_G_FAT;

/// Weir (1949) J Physiol 109:1, abbreviated form without urinary nitrogen:
/// kcal/min = 3.941 VO2 + 1.106 VCO2, both in L/min.
pub fn weir_kcal_per_min(vo2_l_per_min: f64, vco2_l_per_min: f64) -> f64 {
    3.941 * vo2_l_per_min + 1.106 * vco2_l_per_min
}

/// NPRQ, kcal per L O2, fraction of energy from carbohydrate: Zuntz (1901) as
/// tabulated by Lusk (1924), the rows printed in .
const NPRQ_TABLE: [(f64, f64, f64); 7] = [
    (0.707, 4.686, 0.0),
    (0.75, 4.739, 0.156),
    (0.80, 4.801, 0.334),
    (0.85, 4.862, 0.507),
    (0.90, 4.924, 0.675),
    (0.95, 4.985, 0.840),
    (1.00, 5.047, 1.0),
];

/// Lowest NPRQ of the table (pure fat).
pub const NPRQ_FAT: f64 = 0.707;
/// Highest NPRQ of the table (pure carbohydrate).
pub const NPRQ_CARBOHYDRATE: f64 = 1.0;

/// Interpolates column `to` against column `from`, clamping at the table ends.
/// Both columns rise monotonically, so the same routine serves both directions.
fn interpolate(
    value: f64,
    from: impl Fn(&(f64, f64, f64)) -> f64,
    to: impl Fn(&(f64, f64, f64)) -> f64,
) -> f64 {
    let first = &NPRQ_TABLE[0];
    if value <= from(first) {
        return to(first);
    }
    for pair in NPRQ_TABLE.windows(2) {
        let (low, high) = (&pair[0], &pair[1]);
        if value <= from(high) {
            let t = (value - from(low)) / (from(high) - from(low));
            return to(low) + t * (to(high) - to(low));
        }
    }
    to(&NPRQ_TABLE[NPRQ_TABLE.len() - 1])
}

/// kcal released per litre of O2 at a non-protein RQ (Zuntz/Lusk table,
/// interpolated; clamped to 0.707-1.00).
pub fn kcal_per_litre_oxygen(nprq: f64) -> f64 {
    interpolate(nprq, |row| row.0, |row| row.1)
}

/// Fraction (0-1) of energy from carbohydrate at a non-protein RQ (Zuntz/Lusk).
pub fn carbohydrate_energy_share(nprq: f64) -> f64 {
    interpolate(nprq, |row| row.0, |row| row.2)
}

/// Inverse of [`carbohydrate_energy_share`]: the NPRQ at which carbohydrate
/// supplies `share` (0-1) of the energy.
pub fn nprq_from_carbohydrate_share(share: f64) -> f64 {
    interpolate(share, |row| row.2, |row| row.0)
}

/// kcal per litre of O2 for a carbohydrate energy share, through the NPRQ.
pub fn kcal_per_litre_oxygen_at_share(share: f64) -> f64 {
    interpolate(share, |row| row.2, |row| row.1)
}

/// Grams per minute of carbohydrate and fat oxidised (estimates).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, ToSchema)]
pub struct SubstrateOxidation {
    pub carbohydrate_g_per_min: f64,
    pub fat_g_per_min: f64,
}

/// Frayn (1983) J Appl Physiol 55:628. VO2 and VCO2 in L/min, urinary
/// nitrogen in g/min (0 when unknown); carbohydrate is expressed as glucose.
pub fn frayn_oxidation(
    vo2_l_per_min: f64,
    vco2_l_per_min: f64,
    urinary_nitrogen_g_per_min: f64,
) -> SubstrateOxidation {
    SubstrateOxidation {
        carbohydrate_g_per_min: 4.55 * vco2_l_per_min
            - 3.21 * vo2_l_per_min
            - 2.87 * urinary_nitrogen_g_per_min,
        fat_g_per_min: 1.67 * vo2_l_per_min
            - 1.67 * vco2_l_per_min
            - 1.92 * urinary_nitrogen_g_per_min,
    }
}

/// Exercise intensity band for the Jeukendrup & Wallis (2005) equations.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExerciseBand {
    /// 40-50% VO2max: carbohydrate assumed half glucose, half glycogen.
    Low,
    /// 50-75% VO2max: carbohydrate mostly glycogen.
    ModerateToHigh,
}

/// Jeukendrup & Wallis (2005) Int J Sports Med 26 Suppl 1:S28, protein
/// oxidation neglected. VO2 and VCO2 in L/min. The fat equation is the same
/// in both bands (`from memory`; the paper prints it for 50-75%).
pub fn jeukendrup_wallis_oxidation(
    vo2_l_per_min: f64,
    vco2_l_per_min: f64,
    band: ExerciseBand,
) -> SubstrateOxidation {
    let carbohydrate_g_per_min = match band {
        ExerciseBand::Low => 4.344 * vco2_l_per_min - 3.061 * vo2_l_per_min,
        ExerciseBand::ModerateToHigh => 4.210 * vco2_l_per_min - 2.962 * vo2_l_per_min,
    };
    SubstrateOxidation {
        carbohydrate_g_per_min,
        fat_g_per_min: 1.695 * vo2_l_per_min - 1.701 * vco2_l_per_min,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(actual: f64, expected: f64, tolerance: f64) -> bool {
        (actual - expected).abs() <= tolerance
    }

    #[test]
    fn weir_worked_example() {
        // Weir (1949) J Physiol 109:1; worked example in [confirmed]:
        // VO2 3.0, VCO2 2.7 L/min gives 14.809 kcal/min.
        assert!(close(weir_kcal_per_min(3.0, 2.7), 14.809, 0.001));
    }

    #[test]
    fn zuntz_lusk_rows_are_reproduced() {
        // Zuntz (1901) / Lusk (1924) NPRQ table rows [confirmed].
        let rows = [
            (0.707, 4.686, 0.0),
            (0.75, 4.739, 0.156),
            (0.80, 4.801, 0.334),
            (0.85, 4.862, 0.507),
            (0.90, 4.924, 0.675),
            (0.95, 4.985, 0.840),
            (1.00, 5.047, 1.0),
        ];
        for (nprq, kcal, share) in rows {
            assert!(
                close(kcal_per_litre_oxygen(nprq), kcal, 1e-9),
                "kcal at {nprq}"
            );
            assert!(
                close(carbohydrate_energy_share(nprq), share, 1e-9),
                "share at {nprq}"
            );
            assert!(
                close(nprq_from_carbohydrate_share(share), nprq, 1e-9),
                "inverse at {share}"
            );
        }
    }

    #[test]
    fn zuntz_lusk_interpolates_between_rows_and_round_trips() {
        // Zuntz/Lusk: halfway between 0.80 (4.801) and 0.85 (4.862).
        assert!(close(kcal_per_litre_oxygen(0.825), 4.8315, 1e-9));
        for step in 0..=100 {
            let share = step as f64 / 100.0;
            let nprq = nprq_from_carbohydrate_share(share);
            assert!(close(carbohydrate_energy_share(nprq), share, 1e-9));
            assert!(close(
                kcal_per_litre_oxygen(nprq),
                kcal_per_litre_oxygen_at_share(share),
                1e-9
            ));
        }
        // Clamped outside the table.
        assert_eq!(kcal_per_litre_oxygen(0.6), 4.686);
        assert_eq!(kcal_per_litre_oxygen(1.2), 5.047);
    }

    #[test]
    fn frayn_worked_example() {
        // Frayn (1983) J Appl Physiol 55:628; worked example [confirmed]:
        // VO2 3.0, VCO2 2.7, n 0 gives CHO 2.655 g/min, fat 0.501 g/min.
        let oxidation = frayn_oxidation(3.0, 2.7, 0.0);
        assert!(close(oxidation.carbohydrate_g_per_min, 2.655, 0.0005));
        assert!(close(oxidation.fat_g_per_min, 0.501, 0.0005));
    }

    #[test]
    fn jeukendrup_wallis_worked_example() {
        // Jeukendrup & Wallis (2005) Int J Sports Med 26:S28, 50-75% VO2max;
        // worked example [confirmed]: CHO 2.481 g/min, fat 0.492 g/min.
        let oxidation = jeukendrup_wallis_oxidation(3.0, 2.7, ExerciseBand::ModerateToHigh);
        assert!(close(oxidation.carbohydrate_g_per_min, 2.481, 0.0005));
        assert!(close(oxidation.fat_g_per_min, 0.492, 0.0005));
        // 40-50% equation, same source: 4.344 x 2.7 - 3.061 x 3.0 = 2.5458.
        let low = jeukendrup_wallis_oxidation(3.0, 2.7, ExerciseBand::Low);
        assert!(close(low.carbohydrate_g_per_min, 2.5458, 0.0005));
    }

    #[test]
    fn energy_densities_match_the_table_and_common_values() {
        // Glycogen heat of combustion about 4.18 kcal/g and fat about 9.4-9.5
        // kcal/g (Lusk 1924; `from memory`, so a band).
        assert!(close(CARBOHYDRATE_KCAL_PER_G, 4.18, 0.02));
        assert!(close(FAT_KCAL_PER_G, 9.46, 0.05));
    }

    #[test]
    fn table_grams_agree_with_jeukendrup_wallis_during_exercise() {
        // Grams from Zuntz/Lusk energy shares and the densities above, compared
        // with Jeukendrup & Wallis (2005) for the same VO2 and VCO2: within 10%.
        let vo2 = 3.0;
        for nprq in [0.80, 0.85, 0.90, 0.95] {
            let energy = vo2 * kcal_per_litre_oxygen(nprq);
            let share = carbohydrate_energy_share(nprq);
            let carbohydrate_g = energy * share / CARBOHYDRATE_KCAL_PER_G;
            let fat_g = energy * (1.0 - share) / FAT_KCAL_PER_G;
            let reference =
                jeukendrup_wallis_oxidation(vo2, vo2 * nprq, ExerciseBand::ModerateToHigh);
            let carbohydrate_error =
                (carbohydrate_g / reference.carbohydrate_g_per_min - 1.0).abs();
            let fat_error = (fat_g / reference.fat_g_per_min - 1.0).abs();
            assert!(
                carbohydrate_error < 0.10,
                "carbohydrate at {nprq}: {carbohydrate_error}"
            );
            assert!(fat_error < 0.10, "fat at {nprq}: {fat_error}");
        }
    }

    #[test]
    fn weir_agrees_with_the_table() {
        // Weir (1949) and Zuntz/Lusk describe the same chemistry: kcal per L O2
        // from Weir, 3.941 + 1.106 RQ, lies within 1% of the table's row.
        for (nprq, kcal, _) in NPRQ_TABLE {
            let weir = weir_kcal_per_min(1.0, nprq);
            assert!(
                (weir / kcal - 1.0).abs() < 0.01,
                "at {nprq}: {weir} vs {kcal}"
            );
        }
    }
}
