//! Inline SVG charts. Each chart has a title and a description for screen
//! readers, and the same numbers appear in a table next to it. Series differ
//! by line style and label as well as colour. Only presentation attributes
//! are used (no inline styles), so the page's CSP stays strict.

use std::fmt::Write as _;

use chrono::{NaiveDate, NaiveDateTime, NaiveTime, Timelike};

use super::html::{esc, num};
use super::view::{GlycogenPoint, SquadFuelMix, Thresholds, WeekDay};

const INK: &str = "#222222";
const GRID: &str = "#d0d0d0";
const LINE: &str = "#1f2f60";
const CARB: &str = "#2b4c85";
const FAT: &str = "#e8d9a0";
const SESSION: &str = "#e6ecf5";
const KEY_SESSION: &str = "#c9d6ea";
const WHITE: &str = "#ffffff";
const FAT_LINE: &str = "#7a6420";

fn open_svg(out: &mut String, id: &str, w: f64, h: f64, title: &str, desc: &str) {
    let _ = write!(
        out,
        r#"<svg class="chart" viewBox="0 0 {w} {h}" role="img" aria-labelledby="{id}-t {id}-d" xmlns="http://www.w3.org/2000/svg"><title id="{id}-t">{}</title><desc id="{id}-d">{}</desc>"#,
        esc(title),
        esc(desc)
    );
}

fn minutes_since(start: NaiveDateTime, t: NaiveDateTime) -> f64 {
    (t - start).num_seconds() as f64 / 60.0
}

/// Estimated muscle glycogen through the week with the sessions marked and
/// the plan's alert levels drawn.
pub fn glycogen_week(
    from: NaiveDate,
    to: NaiveDate,
    series: &[GlycogenPoint],
    days: &[WeekDay],
    thresholds: &Thresholds,
) -> String {
    let (w, h) = (960.0, 300.0);
    let (left, right, top, bottom) = (52.0, 12.0, 16.0, 44.0);
    let start = from.and_time(NaiveTime::MIN);
    let span_min = ((to - from).num_days() + 1) as f64 * 1440.0;
    let y_max = series
        .iter()
        .map(|p| p.muscle_fraction)
        .fold(1.1_f64, f64::max)
        .min(2.0);
    let x = |m: f64| left + (w - left - right) * (m / span_min).clamp(0.0, 1.0);
    let y = |f: f64| top + (h - top - bottom) * (1.0 - (f / y_max).clamp(0.0, 1.0));
    let mut out = String::new();
    let low = series
        .iter()
        .map(|p| p.muscle_fraction)
        .fold(f64::INFINITY, f64::min);
    open_svg(
        &mut out,
        "glycogen",
        w,
        h,
        "Estimated muscle glycogen through the week",
        &format!(
            "Muscle glycogen as a percentage of normal stores, lowest {} %. Shaded bands are sessions. Dashed line: key-session alert level {} %; dotted line: near-empty level {} %.",
            num(low * 100.0, 0),
            num(thresholds.key_session_min_muscle_fraction * 100.0, 0),
            num(thresholds.near_empty_muscle_fraction * 100.0, 0)
        ),
    );
    // Sessions as bands.
    for day in days {
        for s in &day.sessions {
            let (x0, x1) = (
                x(minutes_since(start, s.start)),
                x(minutes_since(start, s.end)),
            );
            let _ = write!(
                out,
                r#"<rect x="{:.1}" y="{top}" width="{:.1}" height="{:.1}" fill="{}"><title>{} {} ({})</title></rect>"#,
                x0,
                (x1 - x0).max(2.0),
                h - top - bottom,
                if s.key { KEY_SESSION } else { SESSION },
                esc(&s.title),
                s.start.format("%a %H:%M"),
                if s.key { "key session" } else { "session" }
            );
        }
    }
    // Grid and axis labels.
    let mut f = 0.0;
    while f <= y_max + 1e-9 {
        let _ = write!(
            out,
            r#"<line x1="{left}" x2="{}" y1="{y:.1}" y2="{y:.1}" stroke="{GRID}" stroke-width="1"/><text x="{}" y="{:.1}" text-anchor="end" font-size="12" fill="{INK}">{} %</text>"#,
            w - right,
            left - 6.0,
            y(f) + 4.0,
            num(f * 100.0, 0),
            y = y(f)
        );
        f += 0.25;
    }
    for (i, d) in super::view::dates(from, to).iter().enumerate() {
        let x0 = x(i as f64 * 1440.0);
        let _ = write!(
            out,
            r#"<line x1="{x0:.1}" x2="{x0:.1}" y1="{top}" y2="{}" stroke="{GRID}" stroke-width="1"/><text x="{:.1}" y="{}" text-anchor="middle" font-size="12" fill="{INK}">{}</text>"#,
            h - bottom + 6.0,
            x0 + (x(1440.0) - x(0.0)) / 2.0,
            h - bottom + 20.0,
            d.format("%a %-d")
        );
    }
    // Alert levels.
    for (level, dash, label) in [
        (
            thresholds.key_session_min_muscle_fraction,
            "8 5",
            "key-session alert",
        ),
        (thresholds.near_empty_muscle_fraction, "2 4", "near empty"),
    ] {
        let yy = y(level);
        let _ = write!(
            out,
            r#"<line x1="{left}" x2="{}" y1="{yy:.1}" y2="{yy:.1}" stroke="{INK}" stroke-width="1.5" stroke-dasharray="{dash}"/><text x="{}" y="{:.1}" text-anchor="end" font-size="12" fill="{INK}">{label} {} %</text>"#,
            w - right,
            w - right - 4.0,
            yy - 5.0,
            num(level * 100.0, 0)
        );
    }
    // The estimate itself.
    let mut d = String::new();
    for (i, p) in series.iter().enumerate() {
        let _ = write!(
            d,
            "{}{:.1},{:.1}",
            if i == 0 { "M" } else { " L" },
            x(minutes_since(start, p.time)),
            y(p.muscle_fraction)
        );
    }
    let _ = write!(
        out,
        r#"<path d="{d}" fill="none" stroke="{LINE}" stroke-width="2.5"/>"#
    );
    // Session starts, numbered as in the table under the chart.
    let mut n = 0;
    for day in days {
        for s in &day.sessions {
            n += 1;
            let (cx, cy) = (
                x(minutes_since(start, s.start)),
                y(s.glycogen_at_start.muscle_fraction),
            );
            let _ = write!(
                out,
                r#"<circle cx="{cx:.1}" cy="{cy:.1}" r="4" fill="{WHITE}" stroke="{LINE}" stroke-width="2"/><text x="{cx:.1}" y="{:.1}" text-anchor="middle" font-size="11" fill="{INK}">{n}</text>"#,
                (cy - 8.0).max(top + 10.0)
            );
        }
    }
    let _ = write!(
        out,
        r#"<text x="{left}" y="{}" font-size="12" fill="{INK}">Shaded: sessions (darker: key session or match). Numbers: session starts, as listed below.</text></svg>"#,
        h - 6.0
    );
    out
}

/// The squad's fuel mix across a session: carbohydrate and fat shares of
/// energy, stacked, every 5 minutes.
pub fn fuel_share(mix: &SquadFuelMix, total_minutes: f64) -> String {
    let (w, h) = (960.0, 260.0);
    let (left, right, top, bottom) = (52.0, 130.0, 12.0, 36.0);
    let span = total_minutes.max(1.0);
    let x = |m: f64| left + (w - left - right) * (m / span).clamp(0.0, 1.0);
    let y = |f: f64| top + (h - top - bottom) * (1.0 - f.clamp(0.0, 1.0));
    let mut out = String::new();
    let first = mix.share.first().map_or(0.0, |p| p.1);
    let last = mix.share.last().map_or(0.0, |p| p.1);
    open_svg(
        &mut out,
        "share",
        w,
        h,
        "Share of energy from carbohydrate and fat across the session",
        &format!(
            "Mean of {} athletes taking full part: carbohydrate {} % of energy at the start and {} % at the end; fat the rest.",
            mix.athletes,
            num(first * 100.0, 0),
            num(last * 100.0, 0)
        ),
    );
    if mix.share.len() >= 2 {
        let mut carb = format!("M{:.1},{:.1}", x(mix.share[0].0), y(0.0));
        for p in &mix.share {
            let _ = write!(carb, " L{:.1},{:.1}", x(p.0), y(p.1));
        }
        let _ = write!(
            carb,
            " L{:.1},{:.1} Z",
            x(mix.share[mix.share.len() - 1].0),
            y(0.0)
        );
        let _ = write!(
            out,
            r#"<rect x="{left}" y="{top}" width="{:.1}" height="{:.1}" fill="{FAT}"/><path d="{carb}" fill="{CARB}"/>"#,
            x(mix.share[mix.share.len() - 1].0) - left,
            h - top - bottom
        );
        // The lowest runs over the dark area, the highest over the light one.
        for (idx, colour) in [(2usize, WHITE), (3usize, INK)] {
            let mut d = String::new();
            for (i, p) in mix.share.iter().enumerate() {
                let v = if idx == 2 { p.2 } else { p.3 };
                let _ = write!(
                    d,
                    "{}{:.1},{:.1}",
                    if i == 0 { "M" } else { " L" },
                    x(p.0),
                    y(v)
                );
            }
            let _ = write!(
                out,
                r#"<path d="{d}" fill="none" stroke="{colour}" stroke-width="1.5" stroke-dasharray="4 3"/>"#
            );
        }
    }
    for f in [0.0, 0.25, 0.5, 0.75, 1.0] {
        let _ = write!(
            out,
            r#"<text x="{}" y="{:.1}" text-anchor="end" font-size="12" fill="{INK}">{} %</text>"#,
            left - 6.0,
            y(f) + 4.0,
            num(f * 100.0, 0)
        );
    }
    axis_minutes(&mut out, span, &x, h - bottom);
    let _ = write!(
        out,
        r#"<rect x="{}" y="{}" width="14" height="14" fill="{FAT}" stroke="{INK}"/><text x="{}" y="{}" font-size="12" fill="{INK}">fat</text><rect x="{}" y="{}" width="14" height="14" fill="{CARB}"/><text x="{}" y="{}" font-size="12" fill="{INK}">carbohydrate</text><text x="{}" y="{}" font-size="11" fill="{INK}">dashed: lowest</text><text x="{}" y="{}" font-size="11" fill="{INK}">and highest</text></svg>"#,
        w - right + 10.0,
        top + 4.0,
        w - right + 30.0,
        top + 16.0,
        w - right + 10.0,
        h - bottom - 24.0,
        w - right + 30.0,
        h - bottom - 12.0,
        w - right + 10.0,
        top + 60.0,
        w - right + 10.0,
        top + 74.0,
    );
    out
}

fn axis_minutes(out: &mut String, span: f64, x: &dyn Fn(f64) -> f64, y0: f64) {
    let step = if span > 150.0 { 30.0 } else { 15.0 };
    let mut m = 0.0;
    while m <= span + 1e-9 {
        let _ = write!(
            out,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="middle" font-size="12" fill="{INK}">{}</text>"#,
            x(m),
            y0 + 16.0,
            num(m, 0)
        );
        m += step;
    }
    let _ = write!(
        out,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="end" font-size="12" fill="{INK}">minutes elapsed</text>"#,
        x(span),
        y0 + 30.0
    );
}

/// Carbohydrate and fat oxidised per minute, segment by segment (squad means).
pub fn fuel_rate(mix: &SquadFuelMix, total_minutes: f64) -> String {
    let (w, h) = (960.0, 240.0);
    let (left, right, top, bottom) = (52.0, 130.0, 12.0, 36.0);
    let span = total_minutes.max(1.0);
    let y_max = mix
        .segments
        .iter()
        .map(|s| s.3.max(s.4))
        .fold(0.5_f64, f64::max)
        * 1.1;
    let x = |m: f64| left + (w - left - right) * (m / span).clamp(0.0, 1.0);
    let y = |g: f64| top + (h - top - bottom) * (1.0 - (g / y_max).clamp(0.0, 1.0));
    let mut out = String::new();
    open_svg(
        &mut out,
        "rate",
        w,
        h,
        "Carbohydrate and fat oxidised per minute, by part of the session",
        "Mean grams per minute of the athletes taking full part, for each part of the session. Solid line: carbohydrate; dashed line: fat.",
    );
    let mut g = 0.0;
    let step = if y_max > 4.0 { 1.0 } else { 0.5 };
    while g <= y_max + 1e-9 {
        let _ = write!(
            out,
            r#"<line x1="{left}" x2="{}" y1="{yy:.1}" y2="{yy:.1}" stroke="{GRID}"/><text x="{}" y="{:.1}" text-anchor="end" font-size="12" fill="{INK}">{}</text>"#,
            w - right,
            left - 6.0,
            y(g) + 4.0,
            num(g, 1),
            yy = y(g)
        );
        g += step;
    }
    for (value, dash, colour) in [(3usize, "", CARB), (4usize, "7 4", FAT_LINE)] {
        let mut d = String::new();
        for (i, s) in mix.segments.iter().enumerate() {
            let v = if value == 3 { s.3 } else { s.4 };
            let _ = write!(
                d,
                "{}{:.1},{:.1} L{:.1},{:.1}",
                if i == 0 { "M" } else { " L" },
                x(s.0),
                y(v),
                x(s.1),
                y(v)
            );
        }
        let _ = write!(
            out,
            r#"<path d="{d}" fill="none" stroke="{colour}" stroke-width="3" stroke-dasharray="{dash}"/>"#
        );
    }
    for s in &mix.segments {
        let _ = write!(
            out,
            r#"<line x1="{x0:.1}" x2="{x0:.1}" y1="{top}" y2="{}" stroke="{GRID}"/>"#,
            h - bottom,
            x0 = x(s.0)
        );
    }
    axis_minutes(&mut out, span, &x, h - bottom);
    let _ = write!(
        out,
        r#"<line x1="{}" x2="{}" y1="{}" y2="{}" stroke="{CARB}" stroke-width="3"/><text x="{}" y="{}" font-size="12" fill="{INK}">carbohydrate</text><line x1="{}" x2="{}" y1="{}" y2="{}" stroke="{FAT_LINE}" stroke-width="3" stroke-dasharray="7 4"/><text x="{}" y="{}" font-size="12" fill="{INK}">fat</text><text x="{}" y="{}" font-size="11" fill="{INK}">g per minute</text></svg>"#,
        w - right + 8.0,
        w - right + 30.0,
        top + 10.0,
        top + 10.0,
        w - right + 34.0,
        top + 14.0,
        w - right + 8.0,
        w - right + 30.0,
        top + 30.0,
        top + 30.0,
        w - right + 34.0,
        top + 34.0,
        w - right + 8.0,
        top + 54.0,
    );
    out
}

/// One day's eating occasions and sessions on a local-time axis; markers
/// are numbered as in the day's occasion table.
pub fn day_timeline(day: &WeekDay, id: &str) -> String {
    let (w, h) = (960.0, 74.0);
    let (left, right) = (16.0, 16.0);
    let hours: Vec<u32> = day
        .plan
        .eating_occasions
        .iter()
        .map(|o| o.time.hour())
        .chain(day.sessions.iter().map(|s| s.start.hour()))
        .collect();
    let first = hours.iter().copied().min().unwrap_or(7).min(6);
    let last = hours.iter().copied().max().unwrap_or(21).max(22) + 1;
    let (h0, h1) = (f64::from(first), f64::from(last.min(24)));
    let x = |t: NaiveDateTime| {
        let hour = f64::from(t.hour()) + f64::from(t.minute()) / 60.0;
        let hour = if t.date() > day.date { 24.0 } else { hour };
        left + (w - left - right) * ((hour - h0) / (h1 - h0)).clamp(0.0, 1.0)
    };
    let mut out = String::new();
    open_svg(
        &mut out,
        id,
        w,
        h,
        &format!("Eating occasions and sessions on {}", day.date.format("%A")),
        &format!(
            "{} eating occasions and {} sessions between {:02}:00 and {:02}:00 local time; details in the table below.",
            day.plan.eating_occasions.len(),
            day.sessions.len(),
            first,
            last.min(24)
        ),
    );
    let base = day.date.and_time(NaiveTime::MIN);
    for s in &day.sessions {
        let (x0, x1) = (x(s.start), x(s.end));
        let _ = write!(
            out,
            r#"<rect x="{x0:.1}" y="30" width="{:.1}" height="18" fill="{}" stroke="{LINE}"><title>{} {}–{}</title></rect>"#,
            (x1 - x0).max(3.0),
            if s.key { KEY_SESSION } else { SESSION },
            esc(&s.title),
            s.start.format("%H:%M"),
            s.end.format("%H:%M")
        );
    }
    let mut hour = first;
    while hour <= last.min(24) {
        let t = base + chrono::Duration::hours(i64::from(hour));
        let xx = if hour == 24 {
            x(base + chrono::Duration::hours(24))
        } else {
            x(t)
        };
        let _ = write!(
            out,
            r#"<line x1="{xx:.1}" x2="{xx:.1}" y1="50" y2="56" stroke="{INK}"/><text x="{xx:.1}" y="70" text-anchor="middle" font-size="11" fill="{INK}">{:02}</text>"#,
            hour
        );
        hour += 2;
    }
    let _ = write!(
        out,
        r#"<line x1="{left}" x2="{}" y1="50" y2="50" stroke="{INK}"/>"#,
        w - right
    );
    for (i, o) in day.plan.eating_occasions.iter().enumerate() {
        let cx = x(o.time);
        let _ = write!(
            out,
            r#"<circle cx="{cx:.1}" cy="18" r="9" fill="{WHITE}" stroke="{INK}" stroke-width="1.5"><title>{} {}</title></circle><text x="{cx:.1}" y="22" text-anchor="middle" font-size="11" fill="{INK}">{}</text>"#,
            o.time.format("%H:%M"),
            esc(&super::html::words(&o.kind)),
            i + 1
        );
    }
    out.push_str("</svg>");
    out
}
