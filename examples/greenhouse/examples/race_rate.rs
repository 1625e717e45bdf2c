//! Measures how often each planted defect shows, per configuration family (not part of
//! the demo; used to tune the race window).
use greenhouse::*;
fn main() {
    let n: usize = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(200);
    for (workers, flush) in [(1, Flush::OnClose), (4, Flush::OnClose), (4, Flush::EveryFrame)] {
        for batch in [8usize, 64, 512] {
            let cfg = Config {
                batch,
                codec: Codec::Varint,
                checksum: true,
                workers,
                unit: Unit::Celsius,
                dedupe: true,
                flush,
                sensors: 3,
            };
            let readings = sample::readings(3, 2000, 1);
            let want = reference::summarize(&cfg, &readings);
            let fails = (0..n)
                .filter(|_| Hub::new(cfg).run(&readings).unwrap() != want)
                .count();
            println!("workers={workers} flush={flush:?} batch={batch}: {fails}/{n} failed");
        }
    }
}
