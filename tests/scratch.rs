use busyhour::formulas::*;
#[test]
fn scratch() {
    for (n, a) in [(1u32, 2.0), (5, 5.0), (12, 10.0), (15, 20.0), (60, 50.0), (110, 100.0), (10000, 10000.0), (5000, 9000.0), (10000,1.0), (1, 10000.0)] {
        let m = overflow::riordan(n, a).unwrap();
        let t = std::time::Instant::now();
        let f = overflow::final_group(&[(a, n)], 1.0, 100);
        println!("N={n} A={a} {:?} {:?}", t.elapsed(), f);
    }
}
