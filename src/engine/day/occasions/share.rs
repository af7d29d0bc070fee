//! How the day's carbohydrate is shared over the occasions: session
//! occasions get their planned grams, meals share the rest by weight, each
//! held to one occasion's cap, and grams are rounded so the day adds up.

use super::*;

/// Carbohydrate per draft before rounding; the sum equals `total`.
pub(super) fn share_carbohydrate(
    drafts: &[Draft],
    total: f64,
    cap_g: f64,
    warnings: &mut Vec<Warning>,
) -> Vec<f64> {
    let fixed: f64 = drafts.iter().filter_map(|d| d.fixed_carbohydrate).sum();
    let flexible_weight: f64 = drafts
        .iter()
        .filter(|d| d.fixed_carbohydrate.is_none())
        .map(|d| d.carbohydrate_weight)
        .sum();
    if fixed > total + 1e-9 {
        warnings.push(Warning::new(
            WarningCode::SessionFuellingExceedsDayCarbohydrate,
            Severity::Warning,
            format!(
                "Fuelling around the sessions needs {fixed:.0} g of carbohydrate but the day's target is {total:.0} g: session amounts were scaled down to fit and the meals carry little carbohydrate. Consider a higher day target."
            ),
        ));
        return drafts
            .iter()
            .map(|d| d.fixed_carbohydrate.unwrap_or(0.0) * total / fixed)
            .collect();
    }
    let remainder = total - fixed;
    if flexible_weight > 0.0 {
        return fill_meals(drafts, remainder, cap_g);
    }
    // No meal can take the rest (all withheld): spread it over the occasions
    // that are not withheld, or over all of them as a last resort.
    let open: Vec<bool> = drafts
        .iter()
        .map(|d| !d.withheld && d.kind != OccasionKind::DuringSession)
        .collect();
    let count = open.iter().filter(|&&o| o).count();
    drafts
        .iter()
        .zip(&open)
        .map(|(d, &o)| {
            let base = d.fixed_carbohydrate.unwrap_or(0.0);
            if count == 0 {
                base + remainder / drafts.len() as f64
            } else if o {
                base + remainder / count as f64
            } else {
                base
            }
        })
        .collect()
}

/// Shares `remainder` over the flexible meals by weight, holding each to
/// `cap_g` (what a capped meal cannot take goes to the others); only when
/// every meal is full does the rest go over the cap, evenly by weight.
fn fill_meals(drafts: &[Draft], remainder: f64, cap_g: f64) -> Vec<f64> {
    let mut grams: Vec<f64> = drafts
        .iter()
        .map(|d| d.fixed_carbohydrate.unwrap_or(0.0))
        .collect();
    let flexible: Vec<usize> = (0..drafts.len())
        .filter(|&i| drafts[i].fixed_carbohydrate.is_none() && drafts[i].carbohydrate_weight > 0.0)
        .collect();
    let mut open = flexible.clone();
    let mut left = remainder;
    while left > 1e-9 && !open.is_empty() {
        let weight: f64 = open.iter().map(|&i| drafts[i].carbohydrate_weight).sum();
        let mut spent = 0.0;
        let mut still_open = Vec::new();
        for &i in &open {
            let share = left * drafts[i].carbohydrate_weight / weight;
            let room = (cap_g - grams[i]).max(0.0);
            let take = share.min(room);
            grams[i] += take;
            spent += take;
            if take < share - 1e-9 {
                continue;
            }
            still_open.push(i);
        }
        left -= spent;
        if still_open.len() == open.len() {
            break;
        }
        open = still_open;
    }
    if left > 1e-9 {
        let weight: f64 = flexible
            .iter()
            .map(|&i| drafts[i].carbohydrate_weight)
            .sum();
        for &i in &flexible {
            grams[i] += left * drafts[i].carbohydrate_weight / weight;
        }
    }
    grams
}

/// Splits `total` in proportion to `weights` into multiples of 0.1 that add
/// up exactly to `total` rounded to 0.1 (largest remainder method).
pub(crate) fn split_tenths(total: f64, weights: &[f64]) -> Vec<f64> {
    if weights.is_empty() {
        return Vec::new();
    }
    let total_tenths = (total * 10.0).round().max(0.0) as i64;
    let weight_sum: f64 = weights.iter().filter(|w| **w > 0.0).sum();
    let shares: Vec<f64> = weights
        .iter()
        .map(|&w| {
            if weight_sum > 0.0 {
                w.max(0.0) / weight_sum * total_tenths as f64
            } else {
                total_tenths as f64 / weights.len() as f64
            }
        })
        .collect();
    let mut tenths: Vec<i64> = shares.iter().map(|s| s.floor() as i64).collect();
    let mut left = total_tenths - tenths.iter().sum::<i64>();
    // Largest remainder first, ties by position (the pairs are distinct, so
    // an unstable sort gives the one order).
    let mut order: Vec<(f64, usize)> = shares
        .iter()
        .enumerate()
        .map(|(i, s)| (s - s.floor(), i))
        .collect();
    order.sort_unstable_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
    for &(_, i) in order.iter().cycle() {
        if left <= 0 {
            break;
        }
        tenths[i] += 1;
        left -= 1;
    }
    tenths.into_iter().map(|t| t as f64 / 10.0).collect()
}
