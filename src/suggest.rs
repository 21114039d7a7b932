//! Did-you-mean: the known name closest to one the user typed.
//!
//! A foundation module: it imports nothing from the crate, so the job file's
//! checks and the column lookup can both use it.

/// The name in `names` closest to `name` by Jaro-Winkler similarity, when it
/// is close enough (similarity at least 0.8) to be worth suggesting.
pub fn closest<'a>(name: &str, names: &'a [String]) -> Option<&'a str> {
    let lower = name.to_lowercase();
    names
        .iter()
        .map(|n| (strsim::jaro_winkler(&lower, &n.to_lowercase()), n))
        .filter(|(score, _)| *score >= 0.8)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, n)| n.as_str())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_near_miss_is_suggested_and_a_stranger_is_not() {
        let names: Vec<String> = ["floor_area", "staff_hours", "region"]
            .map(String::from)
            .to_vec();
        assert_eq!(closest("Floor_Area", &names), Some("floor_area"));
        assert_eq!(closest("staf_hours", &names), Some("staff_hours"));
        assert_eq!(closest("weather", &names), None);
    }
}
