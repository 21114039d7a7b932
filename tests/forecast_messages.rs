//! What a forecast row that needs a coefficient the fit left out is told:
//! a level no row has, or a level whose indicator is an exact combination
//! of other columns, each said as it is.

mod common;

use common::{sheetfit, stderr, Cell, Scratch};
use Cell::{N, S, T};

#[test]
fn an_aliased_level_that_the_data_has_is_not_called_missing() {
    let s = Scratch::new();
    // `east` is 1 exactly in the East rows, so region[East] is an exact
    // copy of it and is left out of the fit.
    let mut rows = vec![vec![T("month"), T("region"), T("east"), T("y")]];
    for i in 0..24 {
        let region = ["North", "East", "West"][i % 3];
        let east = f64::from(u8::from(region == "East"));
        let y = 10.0 + 0.5 * i as f64 + 3.0 * east + (i % 5) as f64 * 0.3;
        rows.push(vec![
            S(format!("{}-{:02}", 2023 + i / 12, i % 12 + 1)),
            S(region.to_string()),
            N(east),
            N(y),
        ]);
    }
    s.workbook("data.xlsx", &[("records", rows)]);
    s.write(
        "job.toml",
        "[input]\nworkbook = \"data.xlsx\"\n\n[[model]]\nname = \"m\"\nresponse = \"y\"\n\
         numeric = [\"east\"]\ncategorical = { region = \"North\" }\ntrend = \"month\"\n\n\
         [model.forecast]\nhorizon = 2\nhold = { east = 1, region = \"East\" }\n",
    );
    let out = sheetfit(&s.path(""), &["run", "job.toml"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains("needs the coefficient region[East], which was left out of the fit (it is an exact combination of other columns in the rows used (aliased)); its effect cannot be estimated"),
        "{err}"
    );
    assert!(!err.contains("no row of the data has it"), "{err}");
}
