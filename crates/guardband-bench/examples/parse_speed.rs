//! Parse speed of the one grammar's quick path against the hand-written
//! pass it replaced, on a generated workspace: for profiling by hand
//! (`perf record` or callgrind). The benchmark prints the same figures.
use std::time::Instant;

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() {
    let which = std::env::args().nth(1).unwrap_or_default();
    let g = guardband_bench::generate(&std::env::temp_dir().join("gb-parse-speed"), 2000, 40)
        .expect("generate");
    let texts: Vec<String> = g
        .entries
        .iter()
        .map(|p| std::fs::read_to_string(p).expect("read"))
        .collect();
    let bytes: usize = texts.iter().map(|t| t.len()).sum();
    for _ in 0..3 {
        let mut n = 0;
        let t = Instant::now();
        if which != "before" {
            for _ in 0..5 {
                for s in &texts {
                    n += guardband_syntax::parse(s).file.items.len();
                }
            }
        }
        let a = t.elapsed().as_secs_f64() / 5.0;
        let t = Instant::now();
        if which != "after" {
            for _ in 0..5 {
                for s in &texts {
                    let (tok, _) = guardband_syntax::lex(s);
                    n += guardband_bench::quick_pass_before::parse_clean(s, &tok, 48)
                        .map(|i| i.len())
                        .unwrap_or(0);
                }
            }
        }
        let b = t.elapsed().as_secs_f64() / 5.0;
        println!(
            "chumsky quick path {:.1} MB/s, hand-written pass {:.1} MB/s ({n} items)",
            bytes as f64 / 1e6 / a,
            bytes as f64 / 1e6 / b
        );
    }
}
