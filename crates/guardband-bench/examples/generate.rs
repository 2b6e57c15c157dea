//! Writes a generated workspace to disk, for profiling a check by hand:
//! `cargo run --release -p guardband-bench --example generate -- DIR N [FILES]`
//! then `guardband check DIR` under perf, callgrind or massif.

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let (Some(dir), Some(n)) = (
        args.first(),
        args.get(1).and_then(|n| n.parse::<usize>().ok()),
    ) else {
        eprintln!("usage: generate DIR N [FILES]");
        std::process::exit(2);
    };
    let files = args
        .get(2)
        .and_then(|f| f.parse().ok())
        .unwrap_or((n / 50).max(1));
    match guardband_bench::generate(std::path::Path::new(dir), n, files) {
        Ok(g) => println!(
            "{} regulators in {} files, {} bytes of spec, {} bytes of JSON twin",
            n,
            g.entries.len(),
            g.spec_bytes,
            g.twin.len()
        ),
        Err(e) => {
            eprintln!("cannot write {dir}: {e}");
            std::process::exit(1);
        }
    }
}
