use tapplan::simulate::{Design, Model};
fn main() {
    let args: Vec<String> = std::env::args().collect();
    let s = tapplan::scheme::load_file(std::path::Path::new(&args[1]))
        .unwrap()
        .scheme;
    let reps: usize = args.get(2).map(|x| x.parse().unwrap()).unwrap_or(3);
    let d = Design::from_scheme(&s).unwrap();
    let m = Model::new(&s).unwrap();
    let n = m.weather_years_for(&d);
    let t = std::time::Instant::now();
    let mut sum = 0u64;
    let mut un = 0.0;
    for _ in 0..reps {
        for w in 0..n {
            let r = m.simulate_year(
                &d,
                s.info.horizon_years,
                w,
                false,
                &Default::default(),
                None,
            );
            sum += r.annual.shortfall_hours as u64;
            un += r.annual.unmet_m3 + r.annual.energy_kwh;
        }
    }
    let el = t.elapsed().as_secs_f64();
    println!(
        "{} years {:.3} ms/year checksum {} {:.6}",
        reps * n,
        el * 1000.0 / (reps * n) as f64,
        sum,
        un
    );
}
