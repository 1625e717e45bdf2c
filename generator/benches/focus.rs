//! Focus sets (variable strength): rows of a design with a focus set against the plain
//! design at the base strength and at the focus strength over all factors. Prints figures,
//! asserts nothing. Run with `cargo bench -p heddle-generator --bench focus`.
//!
//! The point of variable strength (Cohen, Colbourn, Collofello, Gibbons and Mugridge
//! 2003) is the middle column: near the plain base-strength size plus what the focus set
//! alone needs (λ·v^s rows at least), far below raising the strength everywhere.

use std::time::Instant;

use heddle_generator::{Effort, Focus, Spec, generate};

fn rows(spec: &Spec, effort: Effort) -> String {
    match generate(spec, effort) {
        Ok(d) => d.rows.len().to_string(),
        Err(e) => format!("error: {e}"),
    }
}

fn main() {
    // name, level counts, base strength, focus factors, focus strength
    type Case = (&'static str, Vec<usize>, usize, Vec<usize>, usize);
    let cases: Vec<Case> = vec![
        ("3^10 t=2, focus triple at t=3", vec![3; 10], 2, vec![0, 1, 2], 3),
        (
            "3^10 t=2, focus of 5 at t=3",
            vec![3; 10],
            2,
            vec![0, 1, 2, 3, 4],
            3,
        ),
        (
            "2^20 t=2, focus of 4 at t=3",
            vec![2; 20],
            2,
            vec![3, 7, 11, 15],
            3,
        ),
        ("4^8 t=2, focus triple at t=3", vec![4; 8], 2, vec![0, 1, 2], 3),
        ("3^12 t=2, focus of 4 at t=4", vec![3; 12], 2, vec![0, 1, 2, 3], 4),
    ];
    println!(
        "{:<34} {:>12} {:>12} {:>12} {:>12} {:>12} {:>9}",
        "spec", "plain t fast", "focus fast", "focus tight", "plain t", "plain s", "secs"
    );
    for (name, levels, t, focus, s) in cases {
        let plain = Spec::numbered(&levels).strength(t);
        let focused = plain.clone().focus(Focus::new(focus, s));
        let higher = Spec::numbered(&levels).strength(s);
        let tight = Effort::Tight { budget: 400_000 };
        let start = Instant::now();
        let line = format!(
            "{:<34} {:>12} {:>12} {:>12} {:>12} {:>12}",
            name,
            rows(&plain, Effort::Fast),
            rows(&focused, Effort::Fast),
            rows(&focused, tight),
            rows(&plain, tight),
            rows(&higher, tight),
        );
        println!("{line} {:>9.2}", start.elapsed().as_secs_f64());
    }
    println!("(plain t and plain s with the same tight budget of 400000 moves)");
}
