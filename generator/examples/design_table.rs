//! Writes the engine's table of stored designs (`generator/src/designs.txt`, see the
//! engine's `table` module): for each spec of a family, the tight mode's design where it
//! is smaller than the fast mode's, both made without the table (the doubling's halves,
//! specs of their own, may come from the table being replaced, so a second run can
//! improve on the first). Entries a larger one serves as well (no more rows on more
//! columns) are left out.
//!
//! `cargo run --release -p heddle-generator --example design_table > generator/src/designs.txt`
//! (about 40 minutes on two cores: the tight mode's group searches and long tabu runs
//! take seconds to a few minutes each; the specs run in parallel).

use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};

use heddle_generator::{Effort, Spec, generate_untabled};

/// Levels, strength, the column counts the table covers, and the tight mode's budget
/// in multiples of its default: the specs where the tight mode's designs beat the fast
/// mode (measured by this example). Binary strength 5 takes eight times the default:
/// the invariant search needs it to cover 2^20 with 3 starters of Z20 × Z2 at seed 0
/// (120 rows; with the constant rows, 122, four times was enough at seeds 1 and 2;
/// measured).
/// 5^10 at strength 3 takes 32 times: the search found Z10 × Z5's 4 starters with the
/// constant rows (205 rows, where the doubling gives 225) there and not at eight times
/// (measured, seed 0).
/// Binary strength 4 from 23 columns is where one starter of Zk × Z2 covers (2k rows)
/// and the cyclotomy needs more (to 33 columns: 2^32 63 rows against 67; past that the
/// cyclotomic array of order 67 is as small; measured). Two levels at strengths 3 to 6 on fewer columns (the
/// feature flags of a build) were added later: there the fast mode's short tabu runs
/// stay well above the tight mode's (2^12 at t = 4: 38 rows against 24; 2^10 at t = 5:
/// 69 against 56; 2^11 at t = 6: 167 against 118; 2^36 at t = 3: 26 against 24;
/// measured), and four times the budget at strengths 4 and 5, twice at 6, keep each
/// spec within about a minute. So were 6 levels at strength 3, 5 at 4 and 3 at 5 (the
/// tight mode 3 to 10% below the fast mode: 6^12 at t = 3 493 rows against 517, 5^9 at
/// t = 4 1446 against 1478, 3^14 at t = 5 917 against 1000; measured); 7 levels at
/// strength 3 gain at most six rows there and are left out. Strength 2 takes sixteen times: the tabu search's
/// longer runs, and its start from the construction the greedy beat, take one to
/// sixteen rows off the fast mode's designs there (4^15: 27 rows at sixteen times, 28
/// at the default; 3^20: 15 against 17; 6^20: 66 against 70; 10^20: 173 against 189;
/// measured).
const FAMILY: &[(usize, usize, std::ops::RangeInclusive<usize>, u64)] = &[
    (3, 3, 6..=30, 1),
    (4, 3, 7..=16, 1),
    (5, 3, 8..=9, 1),
    (5, 3, 10..=10, 32),
    (3, 4, 6..=14, 1),
    (4, 4, 6..=9, 2),
    (2, 4, 23..=29, 1),
    (2, 5, 16..=20, 8),
    (2, 3, 12..=40, 1),
    (2, 4, 7..=22, 4),
    (2, 5, 8..=15, 4),
    (2, 5, 21..=24, 4),
    (2, 6, 9..=20, 2),
    (6, 3, 7..=12, 1),
    (5, 4, 7..=9, 1),
    (3, 5, 7..=14, 1),
    (2, 4, 30..=33, 1),
    (3, 2, 5..=24, 16),
    (4, 2, 6..=24, 16),
    (5, 2, 7..=24, 16),
    (6, 2, 4..=24, 16),
    (7, 2, 9..=24, 16),
    (8, 2, 10..=24, 16),
    (9, 2, 11..=24, 16),
    (10, 2, 5..=24, 16),
];

/// Wider specs: levels, strength, a few column counts, and the budget's multiple. A
/// spec takes the smallest stored design on at least its columns, so each entry serves
/// the counts below it.
///
/// At strength 2, from 25 to 50 columns with sixteen times the budget, the tight mode
/// takes one to ten rows off the fast mode's designs (4^32: 34 against 36; 5^50: 59
/// against 63; 6^50: 86 against 92; 10^32: 193 against 203; 10^50: 209 against 216; 7
/// levels only at 50 columns, 8 and 9 levels nowhere, as the Bose product of their
/// orthogonal arrays stays ahead; measured). Not 3 levels: they gain a row at 50 columns
/// only (21 against 22), and that design would serve 3^40 worse than the fast mode's own
/// (21 rows against 20).
///
/// At strength 3 with 3 levels, the tight mode's doubling of the stored halves (which
/// the fast mode does not build) takes 25 to 35 rows off from 40 to 60 columns (3^40: 89
/// against 123; 3^50: 111 against 128; 3^60: 122 against 155; measured). At strength 4
/// with 3 levels, the tight mode's invariant search takes 47 to 147 rows off from 20 to
/// 28 columns (3^20: 327 against 374; 3^24: 363 against 455; 3^28: 402 against 549;
/// measured).
const WIDE: &[(usize, usize, &[usize], u64)] = &[
    (4, 2, &[32, 40, 50], 16),
    (5, 2, &[32, 40, 50], 16),
    (6, 2, &[32, 40, 50], 16),
    (7, 2, &[32, 40, 50], 16),
    (8, 2, &[32, 40, 50], 16),
    (9, 2, &[32, 40, 50], 16),
    (10, 2, &[32, 40, 50], 16),
    (3, 3, &[40, 50, 60], 1),
    (3, 4, &[20, 24, 28], 1),
];

/// Levels, strength, columns, method (spaces as `_`) and rows of one entry.
type Entry = (usize, usize, usize, String, Vec<Vec<u8>>);

fn main() {
    let specs: Vec<(usize, usize, usize, u64)> = FAMILY
        .iter()
        .flat_map(|(v, t, ks, times)| ks.clone().map(move |k| (*v, *t, k, *times)))
        .chain(
            WIDE.iter()
                .flat_map(|(v, t, ks, times)| ks.iter().map(move |&k| (*v, *t, k, *times))),
        )
        .collect();
    // the specs are independent and the engine is deterministic, so they run on every
    // core and their entries are written in the family order all the same
    let next = AtomicUsize::new(0);
    let found: Mutex<Vec<Option<Entry>>> = Mutex::new((0..specs.len()).map(|_| None).collect());
    let workers = std::thread::available_parallelism().map_or(1, |n| n.get());
    std::thread::scope(|scope| {
        for _ in 0..workers {
            scope.spawn(|| {
                loop {
                    let at = next.fetch_add(1, Ordering::Relaxed);
                    let Some(&(v, t, k, times)) = specs.get(at) else {
                        break;
                    };
                    let entry = entry(v, t, k, times);
                    found.lock().expect("no worker panicked")[at] = entry;
                }
            });
        }
    });
    let entries: Vec<Entry> = found
        .into_inner()
        .expect("no worker panicked")
        .into_iter()
        .flatten()
        .collect();
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

/// The tight mode's design for v^k at strength t, made with `times` its default
/// budget, where it is smaller than the fast mode's.
fn entry(v: usize, t: usize, k: usize, times: u64) -> Option<Entry> {
    let budget = Effort::DEFAULT_TIGHT_BUDGET * times;
    let spec = Spec::numbered(&vec![v; k]).strength(t);
    let tight = generate_untabled(&spec, Effort::Tight { budget }).expect("a valid spec");
    let fast = generate_untabled(&spec, Effort::Fast).expect("a valid spec");
    eprintln!(
        "{v}^{k} t={t}: tight {} ({}), fast {}",
        tight.rows.len(),
        tight.stats.method,
        fast.rows.len()
    );
    (tight.rows.len() < fast.rows.len()).then(|| (v, t, k, tight.stats.method.replace(' ', "_"), tight.rows))
}
