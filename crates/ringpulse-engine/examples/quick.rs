//! Runs a case file and prints the summary (developer convenience).
fn main() {
    let path = std::env::args().nth(1).unwrap_or_default();
    let text = std::fs::read_to_string(&path).unwrap_or_default();
    let (mut case, _) = match ringpulse_case::load_case(&text, &path) {
        Ok(c) => c,
        Err(e) => {
            eprintln!("{e}");
            return;
        }
    };
    if let Some(f) = std::env::args().nth(2).and_then(|s| s.parse::<f64>().ok()) {
        case.discretization.mode =
            ringpulse_case::Resolution::SkinDepth { cell_over_skin_depth: f };
    }
    let t = std::time::Instant::now();
    let outcome = if std::env::var_os("MOTION").is_some() {
        let stop_radius = std::env::var("STOP").ok().and_then(|s| s.parse::<f64>().ok());
        ringpulse_engine::prepare(&case).and_then(|p| {
            ringpulse_engine::run_motion(
                &case,
                p,
                &ringpulse_engine::MotionOptions {
                    stop_radius,
                    flow: std::env::var("FLOW")
                        .ok()
                        .and_then(|s| s.parse::<f64>().ok())
                        .map(|stress| ringpulse_engine::flow::FlowLaw::Constant { stress }),
                    exact_coupling: std::env::var_os("EXACT").is_some(),
                },
            )
        })
    } else {
        ringpulse_engine::run(&case)
    };
    match outcome {
        Ok(r) => {
            println!("{:#?}\n{:#?}\n{:#?}\nwarnings {:?}", r.summary, r.mesh, r.stats, r.warnings);
            println!("wall {:.3} s", t.elapsed().as_secs_f64());
        }
        Err(e) => eprintln!("{e}"),
    }
}
