//! The derived terms of a model in words: logs (with their elasticities),
//! lags, events and Fourier seasons, for the overview.

use crate::design::{Design, TermKind};
use crate::fit::Fit;
use crate::job::EventKind;
use crate::text::significant;

/// One sentence per derived term of `design`, in model order.
pub fn term_notes(design: &Design, fit: &Fit) -> Vec<String> {
    let frequency = design
        .timing
        .as_ref()
        .map_or("period", |t| t.frequency.name());
    design
        .terms
        .iter()
        .filter_map(|term| match &term.kind {
            TermKind::Log => Some(log_note(design, fit, &term.name, &term.column)),
            TermKind::Lag { lag } => Some(format!(
                "{}: '{}' {lag} {frequency}{} earlier, by period; rows whose lag reaches a {frequency} without a value are left out.",
                term.name,
                term.column,
                if *lag == 1 { "" } else { "s" }
            )),
            TermKind::Event { kind, at } => {
                let when: Vec<String> = at.iter().map(ToString::to_string).collect();
                Some(match kind {
                    EventKind::Step => format!("{}: a step, 0 before {} and 1 from it on; its coefficient is the lasting shift of the level.", term.name, when.join(", ")),
                    EventKind::Spike => format!("{}: 1 in {} only; its coefficient is the one-off effect.", term.name, when.join(", ")),
                    EventKind::Ramp => format!("{}: 0 before {}, then 1, 2, 3, … {frequency}s from it; its coefficient is the change of trend per {frequency}.", term.name, when.join(", ")),
                })
            }
            TermKind::Fourier { per_cycle, pairs } => Some(format!(
                "fourier: {pairs} sine and cosine pair{} of a cycle of {} {frequency}s, from the period index; together they draw a smooth seasonal pattern that forecasts repeat.",
                if *pairs == 1 { "" } else { "s" },
                if per_cycle.fract() == 0.0 {
                    format!("{per_cycle:.0}")
                } else {
                    format!("{per_cycle:.2}")
                }
            )),
            _ => None,
        })
        .collect()
}

/// What the coefficient of `ln(column)` means: with a log response an
/// elasticity, otherwise the change for 1 % more of the column.
fn log_note(design: &Design, fit: &Fit, name: &str, column: &str) -> String {
    let Some(c) = fit.coefficients.iter().find(|c| c.term == name) else {
        return format!("{name}: the natural log of '{column}'; its coefficient is aliased.");
    };
    let (b, lower, upper) = (c.estimate, c.ci_lower, c.ci_upper);
    if design.log_response {
        format!(
            "{name} with ln({}) is an elasticity: 1 % more {column} goes with about {} % {} {} ({} to {} %), other predictors held equal.",
            design.response,
            significant(b.abs(), 3),
            if b < 0.0 { "less" } else { "more" },
            design.response,
            significant(lower, 3),
            significant(upper, 3)
        )
    } else {
        format!(
            "{name}: 1 % more {column} goes with {} {} change in {} (the coefficient / 100), other predictors held equal.",
            significant(b / 100.0, 3),
            if b < 0.0 { "(a fall)" } else { "(a rise)" },
            design.response
        )
    }
}
