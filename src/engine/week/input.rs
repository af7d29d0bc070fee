//! What the week planner takes: the athlete's sessions, body mass by date,
//! pins, alert levels and settings, and their validation.

use super::*;

// ---------------------------------------------------------------- input

/// One session as this athlete will do it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct PlannedSession {
    /// Id of the stored session, echoed in the output and warnings.
    #[serde(default)]
    pub session_id: Option<Uuid>,
    /// Short name, 1 to 200 characters.
    pub title: String,
    pub kind: SessionKind,
    /// Local date of the start.
    pub date: NaiveDate,
    /// Local start time.
    pub start_time: NaiveTime,
    /// What this athlete does, already adjusted for participation (for a
    /// match: the minutes actually played, once recorded).
    pub segments: Vec<Segment>,
    /// What the athlete is prepared for when it differs from `segments`: a
    /// match is prepared as the whole match for every selected player, since
    /// minutes are not known beforehand. Targets on the day and the day
    /// before follow these; glycogen and the days after follow `segments`.
    #[serde(default)]
    pub prepared_segments: Option<Vec<Segment>>,
    /// The session's full length on the clock, minutes, when this athlete
    /// works fewer minutes (e.g. a substitute). At least the segments' total,
    /// at most 720.
    #[serde(default)]
    pub clock_minutes: Option<f64>,
    /// A session the coaches mark as important for performance.
    #[serde(default)]
    pub key_session: bool,
    /// Deliberately trained with low carbohydrate availability.
    #[serde(default)]
    pub train_low: bool,
    /// Carbohydrate loading enabled by the dietitian (events over 90 min).
    #[serde(default)]
    pub carbohydrate_loading: bool,
}

impl PlannedSession {
    pub(super) fn start(&self) -> NaiveDateTime {
        self.date.and_time(self.start_time)
    }

    pub(super) fn work_minutes(&self) -> f64 {
        self.segments.iter().map(|segment| segment.minutes).sum()
    }

    pub(super) fn clock_minutes(&self) -> f64 {
        let work = self.work_minutes();
        self.clock_minutes.unwrap_or(work).max(work)
    }

    pub(super) fn end(&self) -> NaiveDateTime {
        self.start() + TimeDelta::seconds((self.clock_minutes() * 60.0).round() as i64)
    }

    pub(super) fn is_key(&self) -> bool {
        self.key_session || self.kind == SessionKind::Match
    }

    pub(super) fn reference(&self) -> WeekSessionRef {
        WeekSessionRef {
            session_id: self.session_id,
            title: self.title.clone(),
            start: self.start(),
        }
    }
}

/// Most days of carry-over before `from`.
pub const MAX_CARRY_DAYS: i64 = 28;

impl WeekInput {
    /// The first day simulated: `carry_from`, unless a start state is given.
    pub fn first_simulated_day(&self) -> NaiveDate {
        match (self.start_glycogen, self.carry_from) {
            (None, Some(carry)) if carry <= self.from => carry,
            _ => self.from,
        }
    }
}

/// Planned (or measured) body mass from a date on.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct BodyMassEntry {
    pub date: NaiveDate,
    /// Body mass from this date until the next entry, kg (25 to 250).
    pub body_mass_kg: f64,
}

/// A dietitian's fixed values for one date.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct DatedPins {
    pub date: NaiveDate,
    /// Daily carbohydrate, g/kg (0 to 20).
    #[serde(default)]
    pub carbohydrate_g_per_kg: Option<f64>,
    /// Daily protein, g/kg (0.5 to 4).
    #[serde(default)]
    pub protein_g_per_kg: Option<f64>,
    /// Daily energy intake, kcal (500 to 10000).
    #[serde(default)]
    pub energy_kcal: Option<f64>,
}

impl DatedPins {
    pub(super) fn day_pins(&self) -> DayPins {
        DayPins {
            carbohydrate_g_per_kg: self.carbohydrate_g_per_kg,
            protein_g_per_kg: self.protein_g_per_kg,
            energy_kcal: self.energy_kcal,
        }
    }
}

/// Alert levels of the week's warnings; every field may be omitted.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct WeekThresholds {
    /// A key session or match starting with estimated muscle glycogen below
    /// this fraction of normal stores is flagged, 0.2 to 1.0 (default 0.6).
    /// Our choice, not a published cut-off: a key session should start with
    /// near-normal stores, and 60% means a large part of a hard session's use
    /// was not replaced.
    #[serde(default = "default_key_fraction")]
    pub key_session_min_muscle_fraction: f64,
    /// A session ending with estimated muscle glycogen below this fraction of
    /// normal stores is flagged, 0.05 to 0.6 (default 0.25, the session
    /// model's own alert level).
    #[serde(default = "default_near_empty_muscle")]
    pub near_empty_muscle_fraction: f64,
    /// A session ending with estimated liver glycogen below this fraction of
    /// fed stores is flagged, 0.05 to 0.6 (default 0.2, the session model's
    /// own alert level).
    #[serde(default = "default_near_empty_liver")]
    pub near_empty_liver_fraction: f64,
    /// Consecutive days of planned energy availability in the low band that
    /// raise a week warning, 1 to 14 (default 2: common practice, one low day
    /// can be a deliberate choice, a run of them is a pattern).
    #[serde(default = "default_low_days")]
    pub low_energy_availability_days_in_a_row: u32,
}

fn default_key_fraction() -> f64 {
    0.6
}
fn default_near_empty_muscle() -> f64 {
    LOW_MUSCLE_GLYCOGEN_FRACTION
}
fn default_near_empty_liver() -> f64 {
    LOW_LIVER_GLYCOGEN_FRACTION
}
fn default_low_days() -> u32 {
    2
}

impl Default for WeekThresholds {
    fn default() -> Self {
        Self {
            key_session_min_muscle_fraction: default_key_fraction(),
            near_empty_muscle_fraction: default_near_empty_muscle(),
            near_empty_liver_fraction: default_near_empty_liver(),
            low_energy_availability_days_in_a_row: default_low_days(),
        }
    }
}

/// Everything needed to plan one athlete over a span of days.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct WeekInput {
    /// The athlete's id, echoed in the plan and its warnings.
    #[serde(default)]
    pub athlete_id: Option<Uuid>,
    /// The athlete; `body_mass_kg` applies from the first day.
    pub profile: AthleteProfile,
    /// Planned body mass from given dates on (dates unique, after `from`, at most `to`).
    #[serde(default)]
    pub body_mass_by_date: Vec<BodyMassEntry>,
    /// First planned date (local).
    pub from: NaiveDate,
    /// Last planned date (local), at most 119 days after `from`.
    pub to: NaiveDate,
    /// This athlete's sessions from the day before `from` to two days after `to`.
    #[serde(default)]
    pub sessions: Vec<PlannedSession>,
    /// Day-planner settings; omitted fields take their documented defaults.
    #[serde(default)]
    pub settings: PlanSettings,
    /// The dietitian's pinned values by date (dates unique, inside the span).
    #[serde(default)]
    pub pins: Vec<DatedPins>,
    /// Declared health conditions; each adds a caution every day.
    #[serde(default)]
    pub health_flags: Vec<HealthFlag>,
    /// Simulate from this date (normal full stores at its midnight) so that
    /// glycogen carries into the span: the same day reads the same whatever
    /// span is asked for. Sessions and pins from it on count. At most 28
    /// days before `from`; ignored when `start_glycogen` is given.
    #[serde(default)]
    pub carry_from: Option<NaiveDate>,
    /// Glycogen at midnight before `from`; default normal full stores.
    #[serde(default)]
    pub start_glycogen: Option<GlycogenState>,
    /// Alert levels of the week's warnings.
    #[serde(default)]
    pub thresholds: WeekThresholds,
    /// Include each session's full simulation (`fuel`), with its 5-minute
    /// series and estimates (default false: the summary only).
    #[serde(default)]
    pub include_session_fuel: bool,
    /// Write each planned day's explanations (why each number, with its
    /// source); default true. False leaves `explanations` empty and every
    /// number as it is, for callers that read only the figures (a squad
    /// summary, a CSV sheet).
    #[serde(default = "explain_by_default")]
    #[schema(default = true)]
    pub explain_days: bool,
}

fn explain_by_default() -> bool {
    true
}

// ---------------------------------------------------------------- validation

/// Checks the whole input, reporting every issue at once; returns the
/// athlete resolved for the first day.
pub(super) fn validate(input: &WeekInput) -> Result<ResolvedAthlete, InvalidInput> {
    let mut issues = Issues::default();
    let span = (input.to - input.from).num_days() + 1;
    if input.to < input.from {
        issues.push("to", "must not be before from");
    } else if span > MAX_SPAN_DAYS {
        issues.push(
            "to",
            format!("the span must be at most {MAX_SPAN_DAYS} days (got {span})"),
        );
    }

    // Profile and settings as the day planner and the athlete model see them.
    let athlete = resolve_athlete(&input.profile);
    if let Err(error) = &athlete {
        issues.0.extend(error.issues.iter().cloned());
    }
    let blank_day = DayInput {
        glycogen_to_restore_g: 0.0,
        profile: input.profile.clone(),
        date: input.from,
        sessions: Vec::new(),
        next_day_sessions: Vec::new(),
        day_after_next_sessions: Vec::new(),
        previous_day_sessions: Vec::new(),
        settings: input.settings.clone(),
        pins: DayPins::default(),
        health_flags: Vec::new(),
    };
    // The day planner's own checks (a day plan fails only there).
    if let Err(error) = validate_day(&blank_day) {
        for issue in error.issues {
            if !issues.0.iter().any(|known| known.field == issue.field) {
                issues.0.push(issue);
            }
        }
    }

    let mut mass_dates = Vec::new();
    for (k, entry) in input.body_mass_by_date.iter().enumerate() {
        let at = format!("body_mass_by_date[{k}]");
        issues.range(
            format!("{at}.body_mass_kg"),
            entry.body_mass_kg,
            25.0,
            250.0,
            "kg",
        );
        if let Some(ffm) = input.profile.fat_free_mass_kg
            && entry.body_mass_kg <= ffm
        {
            issues.push(
                format!("{at}.body_mass_kg"),
                "must be above profile.fat_free_mass_kg",
            );
        }
        if entry.date <= input.from || entry.date > input.to {
            issues.push(
                format!("{at}.date"),
                "must be after from (the profile's body mass applies on from) and not after to",
            );
        }
        if mass_dates.contains(&entry.date) {
            issues.push(format!("{at}.date"), "dates must be unique");
        }
        mass_dates.push(entry.date);
    }

    if input.sessions.len() > MAX_SESSIONS {
        issues.push("sessions", format!("at most {MAX_SESSIONS} sessions"));
    }
    if let Some(carry) = input.carry_from
        && (carry > input.from || input.from - carry > TimeDelta::days(MAX_CARRY_DAYS))
    {
        issues.push(
            "carry_from",
            format!("must be on or before from and at most {MAX_CARRY_DAYS} days before it"),
        );
    }
    let first_day = input.first_simulated_day();
    let earliest = first_day - TimeDelta::days(1);
    let latest = input.to + TimeDelta::days(2);
    for (i, session) in input.sessions.iter().enumerate() {
        let at = format!("sessions[{i}]");
        let title = session.title.trim();
        if title.is_empty() || session.title.chars().count() > 200 {
            issues.push(format!("{at}.title"), "must be 1 to 200 characters");
        }
        if session.date < earliest || session.date > latest {
            issues.push(
                format!("{at}.date"),
                format!(
                    "must be between {earliest} and {latest} (carry_from or the span, the day before it and two days after it)"
                ),
            );
        }
        let mut segment_issues = Issues::default();
        validate_segments(&session.segments, &mut segment_issues);
        for issue in segment_issues.0 {
            issues.push(format!("{at}.{}", issue.field), issue.reason);
        }
        if let Some(prepared) = &session.prepared_segments {
            let mut prepared_issues = Issues::default();
            validate_segments(prepared, &mut prepared_issues);
            for issue in prepared_issues.0 {
                issues.push(format!("{at}.prepared_{}", issue.field), issue.reason);
            }
        }
        if let Some(clock) = session.clock_minutes {
            issues.range(
                format!("{at}.clock_minutes"),
                clock,
                0.0,
                MAX_CLOCK_MINUTES,
                "minutes",
            );
            let work = session.work_minutes();
            if work.is_finite() && clock < work {
                issues.push(
                    format!("{at}.clock_minutes"),
                    format!("must not be below the segments' total of {work} minutes"),
                );
            }
        }
    }
    // An athlete cannot be in two sessions at once.
    let finite = |s: &PlannedSession| {
        s.segments
            .iter()
            .all(|segment| segment.minutes.is_finite() && segment.minutes.abs() <= 1e4)
            && s.clock_minutes
                .is_none_or(|c| c.is_finite() && c.abs() <= 1e4)
    };
    let mut order: Vec<usize> = (0..input.sessions.len())
        .filter(|&i| finite(&input.sessions[i]))
        .collect();
    order.sort_by_key(|&i| (input.sessions[i].start(), i));
    for pair in order.windows(2) {
        let (a, b) = (&input.sessions[pair[0]], &input.sessions[pair[1]]);
        if b.start() < a.end() {
            issues.push(
                format!("sessions[{}].start_time", pair[1]),
                format!("overlaps sessions[{}]", pair[0]),
            );
        }
    }

    let mut pin_dates = Vec::new();
    for (k, pin) in input.pins.iter().enumerate() {
        let at = format!("pins[{k}]");
        if pin.date < first_day || pin.date > input.to {
            issues.push(
                format!("{at}.date"),
                "must be inside carry_from (or from)..to",
            );
        }
        if pin_dates.contains(&pin.date) {
            issues.push(format!("{at}.date"), "dates must be unique");
        }
        pin_dates.push(pin.date);
        if let Some(value) = pin.carbohydrate_g_per_kg {
            issues.range(
                format!("{at}.carbohydrate_g_per_kg"),
                value,
                0.0,
                20.0,
                "g/kg",
            );
        }
        if let Some(value) = pin.protein_g_per_kg {
            issues.range(format!("{at}.protein_g_per_kg"), value, 0.5, 4.0, "g/kg");
        }
        if let Some(value) = pin.energy_kcal {
            issues.range(format!("{at}.energy_kcal"), value, 500.0, 10_000.0, "kcal");
        }
    }

    let t = &input.thresholds;
    issues.range(
        "thresholds.key_session_min_muscle_fraction",
        t.key_session_min_muscle_fraction,
        0.2,
        1.0,
        "(fraction of normal stores)",
    );
    issues.range(
        "thresholds.near_empty_muscle_fraction",
        t.near_empty_muscle_fraction,
        0.05,
        0.6,
        "(fraction of normal stores)",
    );
    issues.range(
        "thresholds.near_empty_liver_fraction",
        t.near_empty_liver_fraction,
        0.05,
        0.6,
        "(fraction of fed stores)",
    );
    if t.near_empty_muscle_fraction >= t.key_session_min_muscle_fraction {
        issues.push(
            "thresholds.near_empty_muscle_fraction",
            "must be below key_session_min_muscle_fraction",
        );
    }
    if !(1..=14).contains(&t.low_energy_availability_days_in_a_row) {
        issues.push(
            "thresholds.low_energy_availability_days_in_a_row",
            "must be between 1 and 14 days",
        );
    }

    if let (Some(state), Ok(athlete)) = (&input.start_glycogen, &athlete) {
        let capacity = athlete.glycogen_capacity;
        issues.range(
            "start_glycogen.muscle_g",
            state.muscle_g,
            0.0,
            capacity.muscle_g,
            "g (normal stores for this athlete; loading above them is not modelled)",
        );
        issues.range(
            "start_glycogen.liver_g",
            state.liver_g,
            0.0,
            capacity.liver_g,
            "g (fed liver stores)",
        );
    }

    issues.finish()?;
    athlete
}
