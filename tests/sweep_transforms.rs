//! Model transforms that would leave floating-point range are refused with
//! one line and exit status 2, by the library (`Model::with_load_scaled`,
//! `Model::with_servers`) and by the binary (`sweep --scale`), never by a
//! panic. A renewal stream's time between arrivals is divided by the scale,
//! so a scale of 1e-308 multiplies a 6 s mean by 1e308: no longer a float.

mod common;
use busyhour::scenario::TransformError;
use common::model;
use std::process::Command;

const RENEWAL: &str = r#"
[simulation]
length = "10m"
replications = 2
[[group]]
name = "trunks"
servers = 5
[[stream]]
name = "office"
arrivals = { law = "renewal", between = { law = "gamma", mean = "6s", cv = 0.5 } }
holding = { law = "exponential", mean = "2m" }
route = ["trunks"]
"#;

const SOURCES: &str = r#"
[simulation]
length = "10m"
replications = 2
[[group]]
name = "trunks"
servers = 5
[[stream]]
name = "desk"
arrivals = { law = "sources", count = 10, idle = { law = "exponential", mean = "20m" } }
holding = { law = "exponential", mean = "2m" }
route = ["trunks"]
"#;

const POISSON: &str = r#"
[simulation]
length = "10m"
replications = 2
[[group]]
name = "trunks"
servers = 5
[[stream]]
name = "calls"
arrivals = { law = "poisson", rate = "100/h" }
holding = { law = "exponential", mean = "2m" }
route = ["trunks"]
"#;

#[test]
fn scales_out_of_range_are_errors_not_panics() {
    let m = model(RENEWAL);
    let e = m.with_load_scaled(1e-308, None).unwrap_err();
    assert!(matches!(e, TransformError::OutOfRange { .. }), "{e}");
    assert!(
        e.to_string()
            .contains("time between arrivals of stream \"office\"")
    );
    for bad in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        assert!(matches!(
            m.with_load_scaled(bad, None),
            Err(TransformError::Scale { .. })
        ));
    }
    let e = model(SOURCES).with_load_scaled(1e-308, None).unwrap_err();
    assert!(e.to_string().contains("idle time"), "{e}");
    // A Poisson rate of 100/h times 1e-308 is a subnormal number of calls
    // per second whose mean time between calls is beyond every float.
    let e = model(POISSON).with_load_scaled(1e-308, None).unwrap_err();
    assert!(e.to_string().contains("arrival rate"), "{e}");
    // In range: the mean time between arrivals is divided by the scale.
    let half = m.with_load_scaled(2.0, None).expect("scale 2 is fine");
    let busyhour::scenario::Arrivals::Renewal { between } = &half.streams[0].arrivals else {
        panic!("still renewal");
    };
    assert_eq!(between.mean(), 3.0);
}

#[test]
fn server_counts_out_of_range_are_errors() {
    let m = model(POISSON);
    assert!(matches!(
        m.with_servers(0, 0),
        Err(TransformError::Servers { .. })
    ));
    assert!(matches!(
        m.with_servers(3, 10),
        Err(TransformError::NoGroup { .. })
    ));
    assert_eq!(
        m.with_servers(0, 7).expect("7 servers").groups[0].servers,
        7
    );
}

#[test]
fn the_binary_refuses_an_extreme_scale_in_one_line() {
    let dir = std::env::temp_dir().join(format!("busyhour-transforms-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch folder");
    let file = dir.join("renewal.toml");
    std::fs::write(&file, RENEWAL).expect("write scenario");
    let out = Command::new(env!("CARGO_BIN_EXE_busyhour"))
        .args([
            "sweep",
            file.to_str().expect("utf-8 path"),
            "--scale",
            "1e-308:1e-308:1",
        ])
        .output()
        .expect("run busyhour");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "stderr: {stderr}");
    assert_eq!(stderr.lines().count(), 1, "one line: {stderr}");
    assert!(stderr.contains("--scale"), "{stderr}");
    assert!(stderr.contains("out of range"), "{stderr}");
    assert!(out.stdout.is_empty());
    let _ = std::fs::remove_dir_all(&dir);
}
