//! The hub's interaction suite: eight knobs, every pair of their levels covered three
//! times (λ = 3, set in Cargo.toml's `[package.metadata.heddle]`), so that a pair that
//! breaks the hub is named by the report and a pair that breaks it only sometimes is told
//! apart from one that always does.

use greenhouse::{Codec, Config, Flush, Hub, Unit, reference, sample};
use heddle_test::cover;

/// The hub's summary equals the sequential reference for every configuration.
#[cover(strength = 2)]
fn summary_matches_reference(
    #[levels(8, 64, 512)] batch: usize,
    #[levels(Codec::Plain, Codec::Delta, Codec::Varint)] codec: Codec,
    #[levels(true, false)] checksum: bool,
    #[levels(1, 4)] workers: usize,
    #[levels(Unit::Celsius, Unit::Fahrenheit, Unit::Kelvin)] unit: Unit,
    #[levels(true, false)] dedupe: bool,
    #[levels(Flush::EveryFrame, Flush::OnClose)] flush: Flush,
    #[levels(1, 3, 12)] sensors: u16,
) {
    let config = Config {
        batch,
        codec,
        checksum,
        workers,
        unit,
        dedupe,
        flush,
        sensors,
    };
    let readings = sample::readings(sensors, 2_000, 42);
    let got = Hub::new(config).run(&readings).expect("valid frames decode");
    assert_eq!(
        got,
        reference::summarize(&config, &readings),
        "summary differs for {config:?}"
    );
}
