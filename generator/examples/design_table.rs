//! Writes the engine's table of stored designs (`generator/src/designs.txt`, see the
//! engine's `table` module): for each spec of a family, the tight mode's design where it
//! is smaller than the fast mode's, both made without the table (the doubling's halves,
//! specs of their own, may come from the table being replaced, so a second run can
//! improve on the first). Entries a larger one serves as well (no more rows on more
//! columns) are left out.
//!
//! `cargo run --release -p heddle-generator --example design_table > generator/src/designs.txt`
//! (about 30 minutes: the tight mode's group searches take seconds to a minute each).

use heddle_generator::{Effort, Spec, generate_untabled};

/// Levels, strength, the column counts the table covers, and the tight mode's budget
/// in multiples of its default: the specs where the tight mode's designs beat the fast
/// mode (measured by this example). Binary strength 5 takes eight times the default:
/// the invariant search needs it to cover 2^20 with 3 starters of Z20 × Z2 and the
/// constant rows at seed 0 (four times was enough at seeds 1 and 2; measured).
/// Binary strength 4 from 23 columns is where one starter of Zk × Z2 covers (2k rows)
/// and the cyclotomy needs more.
const FAMILY: &[(usize, usize, std::ops::RangeInclusive<usize>, u64)] = &[
    (3, 3, 6..=30, 1),
    (4, 3, 7..=16, 1),
    (5, 3, 8..=10, 1),
    (3, 4, 6..=14, 1),
    (4, 4, 6..=9, 1),
    (2, 4, 23..=29, 1),
    (2, 5, 16..=20, 8),
];

/// Levels, strength, columns, method (spaces as `_`) and rows of one entry.
type Entry = (usize, usize, usize, String, Vec<Vec<u8>>);

fn main() {
    let mut entries: Vec<Entry> = Vec::new();
    for (v, t, ks, times) in FAMILY {
        let budget = Effort::DEFAULT_TIGHT_BUDGET * times;
        for k in ks.clone() {
            let spec = Spec::numbered(&vec![*v; k]).strength(*t);
            let tight = generate_untabled(&spec, Effort::Tight { budget }).expect("a valid spec");
            let fast = generate_untabled(&spec, Effort::Fast).expect("a valid spec");
            eprintln!(
                "{v}^{k} t={t}: tight {} ({}), fast {}",
                tight.rows.len(),
                tight.stats.method,
                fast.rows.len()
            );
            if tight.rows.len() < fast.rows.len() {
                entries.push((*v, *t, k, tight.stats.method.replace(' ', "_"), tight.rows));
            }
        }
    }
    println!("# heddle design table, format 1 (see table.rs); written by examples/design_table.rs");
    for (i, (v, t, k, method, rows)) in entries.iter().enumerate() {
        let served = entries[i + 1..]
            .iter()
            .any(|e| e.0 == *v && e.1 == *t && e.2 > *k && e.4.len() <= rows.len());
        if served {
            continue;
        }
        let rows: Vec<String> = rows
            .iter()
            .map(|r| r.iter().map(|&x| char::from(b'0' + x)).collect())
            .collect();
        println!("{v} {t} {k} {method} {}", rows.join(","));
    }
}
