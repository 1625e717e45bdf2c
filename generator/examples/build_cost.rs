//! What the engine costs in the build that runs it: the macro calls [`generate`] with
//! [`Effort::Fast`] inside the user's build, where the engine is compiled without
//! optimisation. Run this in the dev profile (`cargo run -p heddle-generator --example
//! build_cost`) to see the time of each large spec; pass words to run only the specs whose
//! name contains one. Figures are printed, never asserted.

use std::time::Instant;

use heddle_generator::{Effort, Focus, Spec, generate};

fn spec(name: &str, levels: &[usize], t: usize, lambda: u32) -> (String, Spec) {
    (
        name.to_string(),
        Spec::numbered(levels).strength(t).lambda(lambda),
    )
}

fn main() {
    let words: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with("--"))
        .collect();
    let mixed17: Vec<usize> = [4, 3, 3, 2, 2, 2, 5, 3, 4, 3, 2, 2, 3, 4, 2, 3, 2].to_vec();
    let specs = vec![
        // three specs that once cost a debug build minutes
        spec("3^20 t=4", &[3; 20], 4, 1),
        spec("4^30 t=4", &[4; 30], 4, 1),
        spec("17 mixed factors t=4 l=3", &mixed17, 4, 3),
        // the regions the benchmark lists, and specs near the engine's limits
        spec("3^17 t=4 l=3", &[3; 17], 4, 3),
        spec("2^50 t=4", &[2; 50], 4, 1),
        spec("2^30 t=5", &[2; 30], 5, 1),
        spec("2^16 t=8", &[2; 16], 8, 1),
        // two levels at a high strength, from the stored designs
        spec("2^20 t=6", &[2; 20], 6, 1),
        spec("7^50 t=3", &[7; 50], 3, 1),
        spec("6^10 t=6", &[6; 10], 6, 1),
        spec("10^50 t=2", &[10; 50], 2, 1),
        spec("3^1000 t=2", &[3; 1000], 2, 1),
        spec("3^3000 t=2", &[3; 3000], 2, 1),
        // many levels and factors: the fast mode's products look for a base among the
        // constructions on up to 20 columns
        spec("9^100 t=2", &[9; 100], 2, 1),
        spec("64^100 t=2", &[64; 100], 2, 1),
        spec("2^4096 t=2", &[2; 4096], 2, 1),
        spec("255^2 t=2 l=16", &[255; 2], 2, 16),
        spec("255^23 t=2", &[255; 23], 2, 1),
        spec("100^5 t=2 l=100", &[100; 5], 2, 100),
        spec("20^5 t=4", &[20; 5], 4, 1),
        spec(
            "4 3 3 2 2 2 5 3 t=2 l=2 (macro-sized)",
            &[4, 3, 3, 2, 2, 2, 5, 3],
            2,
            2,
        ),
        // focus sets (variable strength): the base design, then the focus rows and search
        (
            "4 3 3 2 2 2 5 3 t=2, focus of 3 at 3 (macro-sized)".to_string(),
            Spec::numbered(&[4, 3, 3, 2, 2, 2, 5, 3]).focus(Focus::new(vec![0, 1, 6], 3)),
        ),
        (
            "3^30 t=2, focus of 6 at 4".to_string(),
            Spec::numbered(&[3; 30]).focus(Focus::new((0..6).collect(), 4)),
        ),
    ];
    let mut worst = (0.0f64, String::new());
    println!(
        "{:<40} {:>8} {:>9} {:>11}  method",
        "spec", "rows", "seconds", "work"
    );
    for (name, s) in specs {
        if !words.is_empty() && !words.iter().any(|w| name.contains(w.as_str())) {
            continue;
        }
        let start = Instant::now();
        let result = generate(&s, Effort::Fast);
        let secs = start.elapsed().as_secs_f64();
        match result {
            Ok(d) => println!(
                "{name:<40} {:>8} {secs:>9.3} {:>11}  {}{}",
                d.rows.len(),
                d.stats.work,
                d.stats.method,
                if d.stats.pin_advised {
                    "  (pin advised)"
                } else {
                    ""
                }
            ),
            Err(e) => println!("{name:<40} {:>8} {secs:>9.3} {:>11}  refused: {e}", "-", "-"),
        }
        if secs > worst.0 {
            worst = (secs, name);
        }
    }
    println!();
    println!(
        "worst: {:.3} s ({}), {} build",
        worst.0,
        worst.1,
        if cfg!(debug_assertions) {
            "debug"
        } else {
            "optimised"
        }
    );
}
