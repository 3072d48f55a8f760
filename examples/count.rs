fn main() {
    let f = std::env::args().nth(1).unwrap();
    let formula = isomerank::chem::Formula::parse(&f).unwrap();
    let t = std::time::Instant::now();
    let n = isomerank::enumerate::count(&formula, &Default::default()).unwrap();
    println!("{f} {n} {:?}", t.elapsed());
}
