//! Event terms: a step, a spike or a ramp over the periods.

use super::{Context, DesignColumn, DesignError, NamedColumn, Timing};
use crate::job::{EventKind, EventSpec};
use crate::period::Period;

/// The periods of `event` in the calendar of the date column.
pub(super) fn event_periods(
    ctx: &Context<'_>,
    event: &EventSpec,
    timing: &Timing,
) -> Result<Vec<Period>, DesignError> {
    event
        .at
        .iter()
        .zip(&event.written)
        .map(|(stamp, written)| {
            stamp
                .period_like(timing.first)
                .ok_or_else(|| DesignError::EventPeriod {
                    model: ctx.model.name.clone(),
                    key: format!("{}.{}", event.kind.key(), event.name),
                    written: written.clone(),
                    frequency: timing.frequency.name(),
                    example: timing.first.to_string(),
                })
        })
        .collect()
}

/// The value of an event at `period`: a step 0 before its period and 1
/// from it on, a spike 1 in its periods only, a ramp 0 before its period
/// and then 1, 2, 3, … counted in periods from it (gaps keep their count).
pub(super) fn event_value(kind: EventKind, at: &[Period], period: Period) -> f64 {
    let start = at.iter().min().copied();
    match (kind, start) {
        (_, None) => 0.0,
        (EventKind::Step, Some(s)) => f64::from(u8::from(period >= s)),
        (EventKind::Spike, _) => f64::from(u8::from(at.contains(&period))),
        (EventKind::Ramp, Some(s)) if period >= s => (period.ordinal - s.ordinal + 1) as f64,
        (EventKind::Ramp, _) => 0.0,
    }
}

/// The event's column over the rows' `periods`, named after the event.
pub(super) fn event_column(
    name: &str,
    kind: EventKind,
    at: &[Period],
    periods: &[Period],
) -> Vec<NamedColumn> {
    vec![NamedColumn::new(
        name,
        DesignColumn::values(periods.iter().map(|&p| event_value(kind, at, p)).collect()),
    )]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::period::Frequency;

    fn month(ordinal: i64) -> Period {
        Period {
            ordinal,
            ..Period::first_of(Frequency::Month)
        }
    }

    #[test]
    fn steps_stay_on_spikes_are_one_off_and_ramps_count() {
        let at = [month(10)];
        let values =
            |kind| -> Vec<f64> { (8..13).map(|o| event_value(kind, &at, month(o))).collect() };
        assert_eq!(values(EventKind::Step), [0.0, 0.0, 1.0, 1.0, 1.0]);
        assert_eq!(values(EventKind::Spike), [0.0, 0.0, 1.0, 0.0, 0.0]);
        assert_eq!(values(EventKind::Ramp), [0.0, 0.0, 1.0, 2.0, 3.0]);
        let two = [month(9), month(11)];
        let spikes: Vec<f64> = (8..13)
            .map(|o| event_value(EventKind::Spike, &two, month(o)))
            .collect();
        assert_eq!(spikes, [0.0, 1.0, 0.0, 1.0, 0.0]);
    }
}
