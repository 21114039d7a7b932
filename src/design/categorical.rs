//! Categorical terms: a text column's levels as indicator columns against a
//! baseline level (treatment coding).

use std::collections::HashMap;
use std::sync::Arc;

use super::{quoted, Context, DesignColumn, DesignError, NamedColumn, TermKind};
use crate::job::{Baseline, CategoricalSpec};
use crate::source::Column;

/// A categorical with more levels than this and more than half as many
/// levels as rows is refused: nearly a level per row is an identifier, and
/// its indicators would fit the rows almost exactly. Small textbook
/// layouts (a few groups of a few rows) stay under it.
const HALF_ROWS_ABOVE: usize = 20;

/// Treatment coding of one factor over the rows `keep`: levels sorted,
/// one 0/1 column per level other than the baseline (per level when
/// `every_level`), all reading one code per row.
pub(super) fn indicators(
    ctx: &Context<'_>,
    spec: &CategoricalSpec,
    column: &Column,
    keep: &[usize],
    every_level: bool,
) -> Result<(TermKind, Vec<NamedColumn>), DesignError> {
    // Codes in order of first appearance, each cell's label formed once
    // per distinct cell.
    let mut by_cell: HashMap<u64, u32> = HashMap::new();
    let mut by_label: HashMap<String, u32> = HashMap::new();
    let mut found: Vec<String> = Vec::new();
    // The row where each label is first met, for messages.
    let mut first_rows: Vec<usize> = Vec::new();
    let first_codes: Vec<u32> = keep
        .iter()
        .map(|&i| {
            *by_cell.entry(column.values.key(i)).or_insert_with(|| {
                let label = column.values.get(i).to_string();
                *by_label.entry(label.clone()).or_insert_with(|| {
                    found.push(label);
                    first_rows.push(i);
                    (found.len() - 1) as u32
                })
            })
        })
        .collect();
    if !ctx.model.case_sensitive_levels {
        let mut by_folded: HashMap<String, usize> = HashMap::new();
        for (k, label) in found.iter().enumerate() {
            let folded = label
                .split_whitespace()
                .collect::<Vec<_>>()
                .join(" ")
                .to_lowercase();
            if let Some(&first) = by_folded.get(&folded) {
                return Err(DesignError::LevelsDifferInCase {
                    model: ctx.model.name.clone(),
                    place: ctx.table.place(),
                    column: spec.column.clone(),
                    first: format!(
                        "'{}' ({})",
                        found[first],
                        ctx.table.cell(column, first_rows[first])
                    ),
                    second: format!("'{label}' ({})", ctx.table.cell(column, first_rows[k])),
                });
            }
            by_folded.insert(folded, k);
        }
    }
    let limit = ctx.model.max_levels;
    if found.len() > limit || (found.len() > HALF_ROWS_ABOVE && found.len() * 2 > keep.len()) {
        return Err(DesignError::TooManyLevels {
            model: ctx.model.name.clone(),
            place: ctx.table.place(),
            column: spec.column.clone(),
            levels: found.len(),
            rows: keep.len(),
            why: if found.len() > limit {
                format!("more than the limit of {limit}")
            } else {
                "more than half as many levels as rows".into()
            },
        });
    }
    let mut order: Vec<u32> = (0..found.len() as u32).collect();
    order.sort_by(|&a, &b| found[a as usize].cmp(&found[b as usize]));
    let mut sorted_code = vec![0u32; found.len()];
    for (k, &code) in order.iter().enumerate() {
        sorted_code[code as usize] = k as u32;
    }
    let levels: Vec<String> = order.iter().map(|&c| found[c as usize].clone()).collect();
    let baseline = match &spec.baseline {
        Baseline::Given(level) if levels.contains(level) => level.clone(),
        Baseline::Given(level) => {
            return Err(DesignError::NoSuchBaseline {
                model: ctx.model.name.clone(),
                column: spec.column.clone(),
                baseline: level.clone(),
                levels: quoted(&levels),
            })
        }
        Baseline::FirstSorted => levels.first().cloned().unwrap_or_default(),
    };
    if levels.len() < 2 {
        return Err(DesignError::OneLevel {
            model: ctx.model.name.clone(),
            column: spec.column.clone(),
            level: baseline,
        });
    }
    let codes: Arc<[u32]> = first_codes
        .iter()
        .map(|&c| sorted_code[c as usize])
        .collect();
    let cols = levels
        .iter()
        .zip(0..)
        .filter(|(l, _)| every_level || **l != baseline)
        .map(|(level, code)| {
            NamedColumn::new(
                &format!("{}[{}]", spec.column, level),
                DesignColumn::Indicator {
                    codes: Arc::clone(&codes),
                    code,
                },
            )
        })
        .collect();
    Ok((
        TermKind::Categorical {
            baseline,
            chosen: spec.baseline.clone(),
            levels,
            every_level,
        },
        cols,
    ))
}
