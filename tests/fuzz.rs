//! A short seeded run of the fuzz campaign of issue 10 (fuzz/harness.rs):
//! mutated matrices, edge lists and saved-draws files never make a parser
//! panic, and no changed saved-draws file is accepted. The long run is
//! documented in fuzz/README.md.

#[path = "../fuzz/harness.rs"]
mod harness;

#[test]
fn short_seeded_campaign_finds_nothing() {
    let tally = harness::campaign(3000, 2026);
    assert_eq!(tally.runs, 3000);
    // The campaign exercised acceptance too (not only refusals).
    assert!(tally.accepted > 100, "{tally:?}");
    assert!(
        tally.failures.is_empty(),
        "{:#?}",
        &tally.failures[..tally.failures.len().min(5)]
    );
}
