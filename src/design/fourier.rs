//! Fourier seasons: sine and cosine pairs of the period index over a
//! cycle (Harvey & Shephard 1993; Hyndman & Athanasopoulos, *Forecasting:
//! Principles and Practice*, 3rd ed., §7.4 on Fourier terms).

use super::{Context, DesignColumn, DesignError, NamedColumn, Timing};
use crate::job::FourierSpec;

/// Periods in one cycle of `spec` at the date column's frequency; an error
/// when the period is not shorter than the cycle or the pairs do not fit in
/// it (at most half as many pairs as periods in the cycle).
pub(super) fn periods_per_cycle(
    ctx: &Context<'_>,
    spec: &FourierSpec,
    timing: &Timing,
) -> Result<f64, DesignError> {
    let refuse = |why: String| DesignError::Fourier {
        model: ctx.model.name.clone(),
        why,
    };
    let m = spec.cycle.periods(timing.frequency).ok_or_else(|| {
        refuse(format!(
            "a {} has no {} cycle shorter than it; use period = \"year\" with data by day, week, month or quarter, or \"week\" with data by day",
            timing.frequency.name(),
            spec.cycle.name()
        ))
    })?;
    if f64::from(spec.pairs) > m / 2.0 {
        return Err(refuse(format!(
            "{} pairs is more than a {} of {m} {}s has room for; use at most {}",
            spec.pairs,
            spec.cycle.name(),
            timing.frequency.name(),
            (m / 2.0).floor()
        )));
    }
    Ok(m)
}

/// sin(2πkt/m), cos(2πkt/m) for k = 1..=`pairs`, t the period index
/// (1 at the first period) and m the periods per cycle. kt is reduced
/// modulo m exactly before the angle is formed, so large indexes keep
/// their digits.
pub(super) fn fourier_values(per_cycle: f64, pairs: u32, index: i64) -> Vec<f64> {
    (1..=i64::from(pairs))
        .flat_map(|k| {
            let turn = ((k * index) as f64).rem_euclid(per_cycle) / per_cycle;
            let angle = std::f64::consts::TAU * turn;
            [angle.sin(), angle.cos()]
        })
        .collect()
}

/// The columns `fourier sin 1`, `fourier cos 1`, … over the rows' period
/// `indexes`.
pub(super) fn fourier_columns(per_cycle: f64, pairs: u32, indexes: &[i64]) -> Vec<NamedColumn> {
    let rows: Vec<Vec<f64>> = indexes
        .iter()
        .map(|&t| fourier_values(per_cycle, pairs, t))
        .collect();
    (0..2 * pairs as usize)
        .map(|j| {
            let name = format!(
                "fourier {} {}",
                if j % 2 == 0 { "sin" } else { "cos" },
                j / 2 + 1
            );
            NamedColumn::new(
                &name,
                DesignColumn::values(rows.iter().map(|r| r[j]).collect()),
            )
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pairs_follow_the_definition_and_repeat_each_cycle() {
        let v = fourier_values(12.0, 2, 3);
        let angle = std::f64::consts::TAU * 3.0 / 12.0;
        let want = [
            angle.sin(),
            angle.cos(),
            (2.0 * angle).sin(),
            (2.0 * angle).cos(),
        ];
        for (a, b) in v.iter().zip(want) {
            assert!((a - b).abs() < 1e-15, "{a} vs {b}");
        }
        let later = fourier_values(12.0, 2, 3 + 12 * 1000);
        for (a, b) in v.iter().zip(later) {
            assert!((a - b).abs() < 1e-15, "{a} vs {b}");
        }
        let weeks = fourier_values(365.25 / 7.0, 1, 52);
        let angle = std::f64::consts::TAU * 52.0 / (365.25 / 7.0);
        assert!((weeks[0] - angle.sin()).abs() < 1e-14);
    }
}
