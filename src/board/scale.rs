//! The board's colour scale for daily carbohydrate (g/kg).
//!
//! Our own design: nine steps from pale straw to deep navy whose lightness
//! falls steadily, so the order reads in grey, and reads the same for people
//! with red-green colour vision deficiency (checked in the tests below with
//! the Machado, Oliveira & Fernandes 2009 simulation of protanopia and
//! deuteranopia). Colour is never the only cue: every cell prints its number
//! and load band. Text colour per step keeps WCAG contrast of at least 4.5:1.

/// One step of the scale: from this many g/kg (inclusive) up to the next step.
#[derive(Debug, Clone, Copy)]
pub struct Step {
    pub from_g_per_kg: f64,
    pub background: &'static str,
    pub text: &'static str,
}

const DARK_TEXT: &str = "#111111";
const LIGHT_TEXT: &str = "#ffffff";

pub const STEPS: [Step; 9] = [
    Step {
        from_g_per_kg: f64::NEG_INFINITY,
        background: "#fbf7e6",
        text: DARK_TEXT,
    },
    Step {
        from_g_per_kg: 3.0,
        background: "#e3eac4",
        text: DARK_TEXT,
    },
    Step {
        from_g_per_kg: 4.0,
        background: "#c0d9bd",
        text: DARK_TEXT,
    },
    Step {
        from_g_per_kg: 5.0,
        background: "#98c7c0",
        text: DARK_TEXT,
    },
    Step {
        from_g_per_kg: 6.0,
        background: "#6fabc0",
        text: DARK_TEXT,
    },
    Step {
        from_g_per_kg: 7.0,
        background: "#4f8db6",
        text: DARK_TEXT,
    },
    Step {
        from_g_per_kg: 8.0,
        background: "#3a6ca1",
        text: LIGHT_TEXT,
    },
    Step {
        from_g_per_kg: 9.0,
        background: "#2b4c85",
        text: LIGHT_TEXT,
    },
    Step {
        from_g_per_kg: 10.0,
        background: "#1f2f60",
        text: LIGHT_TEXT,
    },
];

/// The step a value falls in (non-finite values fall in the first).
pub fn step_of(g_per_kg: f64) -> usize {
    if !g_per_kg.is_finite() {
        return 0;
    }
    STEPS
        .iter()
        .rposition(|s| g_per_kg >= s.from_g_per_kg)
        .unwrap_or(0)
}

/// The legend text of a step, e.g. "6–7".
pub fn step_label(i: usize) -> String {
    let from = STEPS[i].from_g_per_kg;
    match STEPS.get(i + 1) {
        _ if i == 0 => format!("under {}", STEPS[1].from_g_per_kg),
        Some(next) => format!("{from}–{}", next.from_g_per_kg),
        None => format!("{from} or more"),
    }
}

/// The scale as CSS classes `.s0` … `.s8` (served as its own stylesheet, so
/// the colours have one source).
pub fn stylesheet() -> String {
    let mut css = String::from("/* generated from src/board/scale.rs */\n");
    for (i, s) in STEPS.iter().enumerate() {
        css.push_str(&format!(
            ".s{i}{{background:{};color:{}}}\n",
            s.background, s.text
        ));
    }
    css
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rgb(hex: &str) -> [f64; 3] {
        let v = |i: usize| f64::from(u8::from_str_radix(&hex[i..i + 2], 16).unwrap());
        [v(1), v(3), v(5)].map(|c| {
            let c = c / 255.0;
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        })
    }

    fn luminance(rgb: [f64; 3]) -> f64 {
        0.2126 * rgb[0] + 0.7152 * rgb[1] + 0.0722 * rgb[2]
    }

    /// CIE L* from relative luminance.
    fn lightness(y: f64) -> f64 {
        if y > 0.008856 {
            116.0 * y.cbrt() - 16.0
        } else {
            903.3 * y
        }
    }

    fn contrast(a: f64, b: f64) -> f64 {
        (a.max(b) + 0.05) / (a.min(b) + 0.05)
    }

    // Machado, Oliveira & Fernandes (2009), IEEE TVCG 15:1291, severity 1.0,
    // applied to linear RGB.
    const PROTANOPIA: [[f64; 3]; 3] = [
        [0.152286, 1.052583, -0.204868],
        [0.114503, 0.786281, 0.099216],
        [-0.003882, -0.048116, 1.051998],
    ];
    const DEUTERANOPIA: [[f64; 3]; 3] = [
        [0.367322, 0.860646, -0.227968],
        [0.280085, 0.672501, 0.047413],
        [-0.011820, 0.042940, 0.968881],
    ];

    fn simulate(m: &[[f64; 3]; 3], c: [f64; 3]) -> [f64; 3] {
        [0, 1, 2].map(|i| (m[i][0] * c[0] + m[i][1] * c[1] + m[i][2] * c[2]).clamp(0.0, 1.0))
    }

    fn assert_ordered(name: &str, lightness_of: impl Fn(&str) -> f64) {
        let l: Vec<f64> = STEPS.iter().map(|s| lightness_of(s.background)).collect();
        for pair in l.windows(2) {
            assert!(
                pair[0] - pair[1] >= 5.0,
                "{name}: adjacent steps must differ by at least 5 L*, got {l:?}"
            );
        }
    }

    #[test]
    fn the_scale_darkens_step_by_step_in_normal_and_red_green_deficient_vision() {
        assert_ordered("normal vision", |h| lightness(luminance(rgb(h))));
        assert_ordered("protanopia", |h| {
            lightness(luminance(simulate(&PROTANOPIA, rgb(h))))
        });
        assert_ordered("deuteranopia", |h| {
            lightness(luminance(simulate(&DEUTERANOPIA, rgb(h))))
        });
    }

    #[test]
    fn every_step_keeps_its_text_readable() {
        for s in STEPS {
            let c = contrast(luminance(rgb(s.background)), luminance(rgb(s.text)));
            assert!(c >= 4.5, "{} on {}: contrast {c:.2}", s.text, s.background);
        }
    }

    #[test]
    fn values_fall_in_their_step() {
        assert_eq!(step_of(2.0), 0);
        assert_eq!(step_of(3.0), 1);
        assert_eq!(step_of(6.49), 4);
        assert_eq!(step_of(12.0), 8);
        assert_eq!(step_of(f64::NAN), 0);
        assert_eq!(step_label(0), "under 3");
        assert_eq!(step_label(4), "6–7");
        assert_eq!(step_label(8), "10 or more");
    }
}
