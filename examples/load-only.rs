use thetaseek::input::{read_source, ReadOptions, BLOCK_BYTES};
fn main() {
    let path = std::env::args().nth(1).unwrap();
    let t = std::time::Instant::now();
    let mut f = std::fs::File::open(&path).unwrap();
    let c = read_source(&path, 0, &mut f, &ReadOptions::default(), BLOCK_BYTES).unwrap();
    eprintln!("load {:.3} s, {} readings", t.elapsed().as_secs_f64(), c.readings.len());
}
