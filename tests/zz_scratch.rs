use naysayer::class::LargeScaleClass;
use naysayer::large_scale::game::{self, DemoSpec};
#[test]
fn scratch() {
    for (oracle, class) in [
        ("rotation", LargeScaleClass::nonsmooth(50, 1.0, 1.0).unwrap()),
        ("drori-teboulle", LargeScaleClass::nonsmooth(50, 1.0, 1.0).unwrap()),
        ("rotation-chain", LargeScaleClass::smooth(80, 1.0, 1.0).unwrap()),
        ("smooth-chain", LargeScaleClass::smooth(80, 1.0, 1.0).unwrap()),
        ("strongly-convex-chain", LargeScaleClass::strongly_convex(80, 100.0, 1.0, 1.0).unwrap()),
    ] {
        for m in ["subgradient", "coordinate-search", "random-direction", "gradient", "accelerated", "heavy-ball"] {
            let spec = DemoSpec { class, oracle: oracle.into(), method: m.into(), queries: 20, seed: 0, record: false };
            match game::run(&spec) {
                Ok(r) => println!("{oracle:22} {m:18} gap {:.6e} bound {:.6e} ratio {:.6}", r.gap.unwrap(), r.bound, r.gap.unwrap()/r.bound),
                Err(e) => println!("{oracle:22} {m:18} {e}"),
            }
        }
    }
}
