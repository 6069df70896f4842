//! Plain sensor conditioning: the definition the optimised `SensorState::update` is compared
//! with, bit for bit: every product in i128, each debounce its own state machine, every voting
//! subset searched after a rank sort. Only public configuration accessors of the core are used,
//! so nothing here shares code with the implementation under test.
#![allow(clippy::unwrap_used)]

use clampwise_core::sensor::*;
use clampwise_core::units::{Celsius, Newtons};

// ---------------------------------------------------------------- debounce

#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
struct Db {
    raised: bool,
    run: u16,
}

impl Db {
    fn update(&mut self, cfg: &Debounce, evidence: Evidence) -> bool {
        let against = matches!(
            (self.raised, evidence),
            (false, Evidence::Bad) | (true, Evidence::Good)
        );
        let towards = matches!(
            (self.raised, evidence),
            (false, Evidence::Good) | (true, Evidence::Bad)
        );
        if against {
            self.run = self.run.saturating_add(1);
            let needed = if self.raised {
                cfg.clear_after
            } else {
                cfg.raise_after
            };
            if self.run >= needed {
                self.raised = !self.raised;
                self.run = 0;
            }
        } else if towards {
            self.run = 0;
        }
        self.raised
    }
}

// ---------------------------------------------------------------- calibration

fn round_shr(v: i128, s: u32) -> i128 {
    v.wrapping_add(1i128 << (s - 1)) >> s
}

/// One channel's calibration in i128: (force bits, saturated, temperature clamped).
pub fn calibrate(
    cal: &ChannelCalibration,
    counts: i32,
    sensor_temp: Option<Celsius>,
) -> (i32, bool, bool) {
    let mut v = (i128::from(counts) * i128::from(cal.gain.to_bits()))
        .wrapping_add(i128::from(cal.offset.to_bits()) << 24);
    let mut temperature_clamped = false;
    if let (Some(tc), Some(t)) = (&cal.temperature, sensor_temp) {
        let (lo, hi) = (tc.min.to_bits(), tc.max.to_bits());
        let t = t.to_bits();
        temperature_clamped = t < lo || t > hi;
        let dt = i128::from(t.max(lo).min(hi)) - i128::from(tc.reference.to_bits());
        let span = round_shr(i128::from(tc.span_per_kelvin.to_bits()) * dt, 16);
        let factor = (1i128 << 30).saturating_add(span);
        let zero = round_shr(i128::from(tc.zero_per_kelvin.to_bits()) * dt, 16);
        v = round_shr(v * factor, 30).wrapping_add(zero);
    }
    let q8 = round_shr(v, 24);
    let bits = i32::try_from(q8).unwrap_or(if q8 < 0 { i32::MIN } else { i32::MAX });
    (bits, i128::from(bits) != q8, temperature_clamped)
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum RailAt {
    Inside,
    Low,
    High,
}

fn classify(r: &AdcRails, counts: i32) -> RailAt {
    let c = i64::from(counts);
    let m = i64::from(r.margin);
    if c <= i64::from(r.low).saturating_add(m) {
        RailAt::Low
    } else if c >= i64::from(r.high).saturating_sub(m) {
        RailAt::High
    } else {
        RailAt::Inside
    }
}

// ---------------------------------------------------------------- filter

#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
struct Lp {
    acc: i64,
    primed: bool,
}

fn round_out(acc: i64) -> i32 {
    let v = acc.saturating_add(1 << 23) >> 24;
    i32::try_from(v).unwrap_or(if v < 0 { i32::MIN } else { i32::MAX })
}

impl Lp {
    fn reset(&mut self, value: i32) {
        self.acc = i64::from(value) << 24;
        self.primed = true;
    }
    fn output(&self) -> Option<Newtons> {
        self.primed.then(|| Newtons::from_bits(round_out(self.acc)))
    }
    /// α·e rounded to nearest, halves away from zero, with α's 32 leading bits (the rest
    /// cleared), as the core's filter applies it.
    fn update(&mut self, alpha_q60: i64, x: i32) {
        if !self.primed {
            self.reset(x);
        } else {
            let e = (i64::from(x) << 24).saturating_sub(self.acc);
            let drop = 32 - alpha_q60.leading_zeros();
            let alpha = i128::from((alpha_q60 >> drop) << drop);
            let magnitude = (i128::from(e).abs() * alpha + (1i128 << 59)) >> 60;
            let step = i64::try_from(if e < 0 { -magnitude } else { magnitude }).unwrap_or(e);
            self.acc = self.acc.saturating_add(step);
        }
    }
}

// ---------------------------------------------------------------- actuator model

#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
struct Act {
    primed: bool,
    force: i32,
}

impl Act {
    fn update(&mut self, tr: &ActuatorTransfer, command: ActuatorCommand) -> (i32, bool) {
        let line = ((i128::from(command.to_bits()) * i128::from(tr.gain.to_bits()))
            .saturating_add(1i128 << 39)
            >> 40)
            .saturating_add(i128::from(tr.offset.to_bits()));
        let half = i128::from(tr.hysteresis.to_bits() / 2);
        let f = i128::from(self.force);
        let next = if !self.primed {
            line
        } else if line - half > f {
            line - half
        } else if line + half < f {
            line + half
        } else {
            f
        };
        let bits = i32::try_from(next).unwrap_or(if next < 0 { i32::MIN } else { i32::MAX });
        self.primed = true;
        self.force = bits;
        (bits, i128::from(bits) != next)
    }
}

// ---------------------------------------------------------------- diagnostics

#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
struct Stuck {
    primed: bool,
    reference: i32,
    quiet: u32,
    command_lo: i32,
    command_hi: i32,
    command_seen: bool,
}

impl Stuck {
    fn step(
        &mut self,
        force: i32,
        command: Option<i32>,
        band: i32,
        window: u32,
        span: i32,
    ) -> Evidence {
        let moved = (i64::from(force) - i64::from(self.reference)).abs() > i64::from(band);
        if !self.primed || moved {
            let evidence = if self.primed {
                Evidence::Good
            } else {
                Evidence::None
            };
            *self = Self {
                primed: true,
                reference: force,
                quiet: 0,
                command_lo: command.unwrap_or(0),
                command_hi: command.unwrap_or(0),
                command_seen: command.is_some(),
            };
            return evidence;
        }
        self.quiet = self.quiet.saturating_add(1);
        if let Some(c) = command {
            if self.command_seen {
                self.command_lo = self.command_lo.min(c);
                self.command_hi = self.command_hi.max(c);
            } else {
                (self.command_lo, self.command_hi, self.command_seen) = (c, c, true);
            }
        }
        let spanned = self.command_seen
            && i64::from(self.command_hi) - i64::from(self.command_lo) >= i64::from(span);
        if self.quiet >= window && spanned {
            Evidence::Bad
        } else {
            Evidence::None
        }
    }
}

struct Checked {
    accepted: Option<i32>,
    was_stale: bool,
    saturated: bool,
    temperature_clamped: bool,
}

/// The limits with what the configuration derived from them.
struct Derived<'a> {
    limits: &'a DiagnosticLimits,
    rate_per_sample_q32: i64,
    stuck_window: Option<u32>,
}

impl Derived<'_> {
    fn allowance_q32(&self, samples: u32) -> i128 {
        (i128::from(self.limits.noise_band.to_bits()) << 24)
            .saturating_add(i128::from(self.rate_per_sample_q32) * i128::from(samples))
    }
}

#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
struct Diag {
    invalid: Db,
    rail_low: Db,
    rail_high: Db,
    range: Db,
    rate: Db,
    stuck: Db,
    disagree: Db,
    stuck_window: Stuck,
    ever_accepted: bool,
    last_accepted: i32,
    since_accepted: u32,
    rejected_now: bool,
}

impl Diag {
    fn stale(&self, d: &Derived<'_>) -> bool {
        !self.ever_accepted
            || (self.rejected_now && self.since_accepted > u32::from(d.limits.max_hold_samples))
    }

    fn held_for(&self) -> u32 {
        if self.rejected_now {
            self.since_accepted
        } else {
            0
        }
    }

    fn check(
        &mut self,
        d: &Derived<'_>,
        cal: &ChannelCalibration,
        raw: RawChannel,
        command: Option<ActuatorCommand>,
        sensor_temp: Option<Celsius>,
    ) -> Checked {
        let was_stale = self.stale(d);
        self.since_accepted = self.since_accepted.saturating_add(1);
        let db = &d.limits.debounce;
        let mut out = Checked {
            accepted: None,
            was_stale,
            saturated: false,
            temperature_clamped: false,
        };
        self.rejected_now = true;
        if !raw.valid {
            self.invalid.update(&db.invalid, Evidence::Bad);
            return out;
        }
        self.invalid.update(&db.invalid, Evidence::Good);
        let rail = classify(&cal.rails, raw.counts);
        let (low, high) = match rail {
            RailAt::Inside => (Evidence::Good, Evidence::Good),
            RailAt::Low => (Evidence::Bad, Evidence::Good),
            RailAt::High => (Evidence::Good, Evidence::Bad),
        };
        self.rail_low.update(&db.rail, low);
        self.rail_high.update(&db.rail, high);
        if rail != RailAt::Inside {
            out.saturated = true;
            return out;
        }
        let (f, sat, clamped) = calibrate(cal, raw.counts, sensor_temp);
        out.saturated = sat;
        out.temperature_clamped = clamped;
        let l = d.limits;
        let in_range = f >= l.force_min.to_bits() && f <= l.force_max.to_bits();
        self.range.update(
            &db.range,
            if in_range {
                Evidence::Good
            } else {
                Evidence::Bad
            },
        );
        let rate_ok = if self.ever_accepted {
            let change = (i128::from(f) - i128::from(self.last_accepted)) << 24;
            let ok = change.abs() <= d.allowance_q32(self.since_accepted);
            self.rate
                .update(&db.rate, if ok { Evidence::Good } else { Evidence::Bad });
            ok
        } else {
            true
        };
        if let (Some(window), Some(s)) = (d.stuck_window, &l.stuck) {
            let e = self.stuck_window.step(
                f,
                command.map(|c| c.to_bits()),
                l.noise_band.to_bits(),
                window,
                s.command_span.to_bits(),
            );
            self.stuck.update(&db.stuck, e);
        }
        if in_range && rate_ok {
            self.rejected_now = false;
            self.ever_accepted = true;
            self.last_accepted = f;
            self.since_accepted = 0;
            out.accepted = Some(f);
        }
        out
    }

    fn flags(&self, d: &Derived<'_>) -> ChannelFlags {
        let mut f = ChannelFlags::empty();
        f.set(ChannelFlags::INVALID, self.invalid.raised);
        f.set(ChannelFlags::RAIL_LOW, self.rail_low.raised);
        f.set(ChannelFlags::RAIL_HIGH, self.rail_high.raised);
        f.set(ChannelFlags::OUT_OF_RANGE, self.range.raised);
        f.set(ChannelFlags::RATE, self.rate.raised);
        f.set(ChannelFlags::STUCK, self.stuck.raised);
        f.set(ChannelFlags::DISAGREE, self.disagree.raised);
        f.set(ChannelFlags::REJECTED, self.rejected_now);
        f.set(ChannelFlags::STALE, self.stale(d));
        f
    }
}

// ---------------------------------------------------------------- voting

type Sorted = [(i32, u8); 4];

fn sort_candidates(candidates: &[Option<Newtons>]) -> Sorted {
    let mut vals = [None; 4];
    for (v, c) in vals.iter_mut().zip(candidates.iter()) {
        *v = c.map(|x| x.to_bits());
    }
    let mut out = [(0i32, 0u8); 4];
    for (i, vi) in vals.iter().enumerate() {
        let Some(x) = *vi else { continue };
        let rank = vals
            .iter()
            .enumerate()
            .filter(|&(j, vj)| vj.is_some_and(|y| y < x || (y == x && j < i)))
            .count();
        if let Some(slot) = out.get_mut(rank) {
            *slot = (x, 1 << i);
        }
    }
    out
}

fn gather(sorted: &Sorted, mask: u8) -> ([i32; 4], usize) {
    let mut v = [0i32; 4];
    let mut n = 0usize;
    for &(x, bit) in sorted {
        if bit & mask != 0
            && let Some(slot) = v.get_mut(n)
        {
            *slot = x;
            n += 1;
        }
    }
    (v, n)
}

fn median(v: &[i32; 4], n: usize) -> i64 {
    let at = |i: usize| v.get(i).map_or(0, |&x| i64::from(x));
    if n == 0 {
        0
    } else if n % 2 == 1 {
        at(n / 2)
    } else {
        (at(n / 2 - 1) + at(n / 2)) >> 1
    }
}

fn centre(sorted: &Sorted, mask: u8) -> (i64, i64, usize) {
    let (v, n) = gather(sorted, mask);
    let m = median(&v, n);
    let lo = i64::from(v.first().copied().unwrap_or(0));
    let hi = i64::from(v.get(n.saturating_sub(1)).copied().unwrap_or(0));
    (m, (m - lo).max(hi - m), n)
}

fn to_newtons(v: i64) -> Newtons {
    Newtons::from_bits(i32::try_from(v).unwrap_or(if v < 0 { i32::MIN } else { i32::MAX }))
}

/// The vote by its definition: every subset of the usable channels tried.
pub fn vote(candidates: &[Option<Newtons>], tolerance: Newtons, model: Option<Newtons>) -> Vote {
    let usable = candidates
        .iter()
        .take(4)
        .enumerate()
        .fold(0u8, |m, (i, c)| if c.is_some() { m | (1 << i) } else { m });
    if usable == 0 {
        return Vote {
            used: ChannelMask::EMPTY,
            force: Newtons::ZERO,
            agreement: Agreement::NoChannels,
            spread: Newtons::ZERO,
        };
    }
    let tol = i64::from(tolerance.to_bits());
    let model = model.map(|m| i64::from(m.to_bits()));
    let sorted = sort_candidates(candidates);
    let mut best_size = 0usize;
    let mut ties = 0u32;
    let mut first = (0u8, 0i64);
    let mut nearest: Option<(u8, i64, i64, bool)> = None;
    for mask in 1u8..16 {
        if mask & usable != mask {
            continue;
        }
        let (m, reach, n) = centre(&sorted, mask);
        if reach > tol || n < best_size {
            continue;
        }
        if n > best_size {
            (best_size, ties, first, nearest) = (n, 0, (mask, m), None);
        }
        ties += 1;
        if let Some(p) = model {
            let d = (m - p).abs();
            nearest = match nearest {
                Some((_, _, nd, _)) if d > nd => nearest,
                Some((nm, nmed, nd, _)) if d == nd => Some((nm, nmed, nd, false)),
                _ => Some((mask, m, d, true)),
            };
        }
    }
    let (mask, m, agreement) = if ties == 1 {
        let agreement = if best_size == 1 && usable.count_ones() == 1 {
            Agreement::Single
        } else if first.0 == usable {
            Agreement::Unanimous
        } else {
            Agreement::Majority
        };
        (first.0, first.1, agreement)
    } else if let Some((nm, nmed, _, true)) = nearest {
        (nm, nmed, Agreement::ModelTieBreak)
    } else {
        let (m, reach, _) = centre(&sorted, usable);
        return Vote {
            used: ChannelMask::from_bits(usable),
            force: to_newtons(m),
            agreement: Agreement::Unresolved,
            spread: to_newtons(reach),
        };
    };
    Vote {
        used: ChannelMask::from_bits(mask),
        force: to_newtons(m),
        agreement,
        spread: Newtons::ZERO,
    }
}

// ---------------------------------------------------------------- the whole update

#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
struct Channel {
    diagnostics: Diag,
    filter: Lp,
}

/// Plain state of the force sensing: per channel its debounces, filter and diagnostics.
#[derive(Clone, Copy, Debug)]
pub struct PlainSensor<const C: usize> {
    channels: [Channel; C],
    actuator: Act,
    temperature: Option<Celsius>,
}

impl<const C: usize> Default for PlainSensor<C> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const C: usize> PlainSensor<C> {
    /// Every channel fresh, as `SensorState::new`.
    pub fn new() -> Self {
        Self {
            channels: [Channel::default(); C],
            actuator: Act::default(),
            temperature: None,
        }
    }

    /// One sample, as `SensorState::update`.
    pub fn update(
        &mut self,
        cfg: &SensorConfig<C>,
        raw: &[RawChannel; C],
        actuator_command: Option<ActuatorCommand>,
        sensor_temp: Option<Celsius>,
    ) -> ForceReading {
        if sensor_temp.is_some() {
            self.temperature = sensor_temp;
        }
        let d = Derived {
            limits: cfg.limits(),
            rate_per_sample_q32: cfg.rate_per_sample_q32(),
            stuck_window: cfg.stuck_window_samples(),
        };
        let mut saturated = false;
        let mut temperature_clamped = false;
        let predicted = match (cfg.fallback(), actuator_command) {
            (Some(tr), Some(c)) => {
                let (f, sat) = self.actuator.update(tr, c);
                saturated |= sat;
                Some(Newtons::from_bits(f))
            }
            _ => None,
        };
        let alpha = cfg.filter().coefficient_bits();

        let mut candidates = [None; 4];
        let mut channel_force = [None; 4];
        let outputs = candidates.iter_mut().zip(channel_force.iter_mut());
        for (((ch, cal), r), (cand, out)) in self
            .channels
            .iter_mut()
            .zip(cfg.channels().iter())
            .zip(raw.iter())
            .zip(outputs)
        {
            let c = ch
                .diagnostics
                .check(&d, cal, *r, actuator_command, self.temperature);
            saturated |= c.saturated;
            temperature_clamped |= c.temperature_clamped;
            if let Some(f) = c.accepted {
                if c.was_stale {
                    ch.filter.reset(f);
                } else {
                    ch.filter.update(alpha, f);
                }
            }
            *out = ch.filter.output();
            if !ch.diagnostics.flags(&d).intersects(ChannelFlags::UNUSABLE) {
                *cand = *out;
            }
        }

        let v = vote(&candidates, cfg.voting().tolerance, predicted);

        let tol = i64::from(cfg.voting().tolerance.to_bits());
        let db = &d.limits.debounce;
        let mut channel_flags = [ChannelFlags::empty(); 4];
        let mut held_q32: i128 = 0;
        for (i, ((ch, out), flags)) in self
            .channels
            .iter_mut()
            .zip(channel_force.iter())
            .zip(channel_flags.iter_mut())
            .enumerate()
        {
            let evidence = match (v.reference(), out, C > 1 && !ch.diagnostics.rejected_now) {
                (Some(m), Some(x), true) => {
                    if (i64::from(x.to_bits()) - i64::from(m.to_bits())).abs() <= tol {
                        Evidence::Good
                    } else {
                        Evidence::Bad
                    }
                }
                _ => Evidence::None,
            };
            ch.diagnostics.disagree.update(&db.disagreement, evidence);
            *flags = ch.diagnostics.flags(&d);
            if v.used.contains(i) {
                held_q32 = held_q32.max(match ch.diagnostics.held_for() {
                    0 => 0,
                    k => d.allowance_q32(k),
                });
            }
        }

        let (force, uncertainty, health, source) = if v.used.is_empty() {
            match (cfg.fallback(), predicted) {
                (Some(tr), Some(p)) => (
                    Some(p),
                    Newtons::from_bits(
                        tr.uncertainty
                            .to_bits()
                            .saturating_add(tr.hysteresis.to_bits() / 2),
                    ),
                    Health::Lost,
                    ForceSource::ActuatorFallback,
                ),
                _ => (None, Newtons::MAX, Health::Lost, ForceSource::Unavailable),
            }
        } else {
            let clean = channel_flags.iter().all(|f| f.is_empty());
            let all_used = v.used == ChannelMask::first(C);
            let agreed = matches!(v.agreement, Agreement::Single | Agreement::Unanimous);
            let health = if clean && all_used && agreed && !temperature_clamped {
                Health::Ok
            } else {
                Health::Degraded
            };
            let held = (held_q32.saturating_add((1 << 24) - 1)) >> 24;
            let u = i128::from(cfg.voting().channel_uncertainty.to_bits())
                .saturating_add(held)
                .saturating_add(i128::from(v.spread.to_bits()));
            let u = i32::try_from(u).unwrap_or(i32::MAX);
            (
                Some(v.force),
                Newtons::from_bits(u),
                health,
                ForceSource::Channels { mask: v.used },
            )
        };
        ForceReading {
            force,
            uncertainty,
            health,
            source,
            agreement: v.agreement,
            channel_flags,
            channel_force,
            saturated,
            temperature_clamped,
            // The plain definition checks no plausibility against the actuator model; the
            // equivalence test compares that flag on its own.
            implausible: false,
        }
    }
}
