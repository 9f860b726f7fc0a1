//! The verification suite of `hxgrid verify` runs here too: every arrangement on its default
//! grid against its published closed form (Incropera Table 11.3, Eqs. 11.30a and 11.31a;
//! Mason 1954 / Baclic 1990; Kays & London), within 1e-4 in ε, and the observed order.

#[test]
fn every_verification_row_passes() {
    let rows = hxgrid::verify::run();
    assert!(rows.len() >= 40);
    let failed: Vec<_> = rows.iter().filter(|r| !r.passed).collect();
    assert!(failed.is_empty(), "failed rows: {failed:#?}");
    // The closed-form rows are held to 1e-4 except the two approximations, marked as such.
    let loose: Vec<_> = rows.iter().filter(|r| r.quantity == "effectiveness" && r.tolerance > hxgrid::verify::TOLERANCE).collect();
    assert_eq!(loose.len(), 2);
    assert!(loose.iter().all(|r| r.source.starts_with("approximate")));
}

/// `hxgrid verify --json` prints the table as JSON and exits 0.
#[test]
fn verify_command_prints_json() {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_hxgrid")).args(["verify", "--json"]).output().unwrap();
    assert!(out.status.success());
    let rows: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let rows = rows.as_array().unwrap();
    assert!(rows.iter().all(|r| r["passed"] == true));
    for key in ["case", "quantity", "reference", "computed", "error", "tolerance", "source"] {
        assert!(rows[0].get(key).is_some(), "{key}");
    }
}
