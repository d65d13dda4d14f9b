//! The physical models, one module per topic. Every function is pure, takes SI units (or names
//! its unit in the argument), and cites the source of its formula in its doc comment; each has
//! tests against published values beside it.
//!
//! | model | module | source | range where it holds |
//! |---|---|---|---|
//! | water density | [`water`] | Tanaka et al. (2001), *Metrologia* 38 | 0–40 °C |
//! | water viscosity | [`water`] | Vogel-type fit, checked against CRC Handbook values | 0–100 °C |
//! | pressure ↔ head, flow units | [`water`] | definitions (g = 9.80665 m/s²) | — |
//! | Darcy–Weisbach friction factor | [`pipes`] | Colebrook–White (1939), Newton-solved from Swamee & Jain (1976); 64/Re laminar | Re > 4000 turbulent; 2000–4000 interpolated (convention) |
//! | Hazen–Williams | [`pipes`] | SI form hf = 10.67 L Q^1.852 / (C^1.852 d^4.87) | water at ordinary temperatures, turbulent flow |
//! | minor losses | [`pipes`] | ΣK·v²/2g | — |
//! | Theis drawdown, W(u) = E₁(u) | [`aquifer`] | Theis (1935); Abramowitz & Stegun 5.1.11 and 5.1.56 | confined, homogeneous, infinite aquifer |
//! | Cooper–Jacob | [`aquifer`] | Cooper & Jacob (1946), via Kruseman & de Ridder (1994) | u < 0.01 |
//! | Thiem | [`aquifer`] | Thiem (1906), via Kruseman & de Ridder (1994) | steady state |
//! | well loss BQ + CQ² | [`aquifer`] | Jacob (1947) | step-test coefficients |
//! | pumping-test analysis: Cooper–Jacob late-time line, Theis least squares, Theis recovery, Hantush–Bierschenk with superposition, safe yield | [`pumping_test`] | Cooper & Jacob (1946); Theis (1935); Hantush (1964), Bierschenk (1963) via Kruseman & de Ridder (1994) | confined aquifer; u < 0.05 on the straight line |
//! | sun geometry, H₀ | [`solar`] | Duffie & Beckman (2006), ch. 1 (Cooper 1969, Spencer 1971) | all latitudes (polar day/night clamped) |
//! | hourly split of daily totals | [`solar`] | Collares-Pereira & Rabl (1979) global; Liu & Jordan (1960) diffuse | monthly-mean days; used for every day |
//! | diffuse fraction | [`solar`] | Erbs, Klein & Duffie (1982) daily and hourly | 0 < K_T < 1 |
//! | tilted plane | [`solar`] | isotropic sky, Liu & Jordan (1963) | any tilt and azimuth |
//! | cell temperature, PV power | [`solar`] | NOCT model (Ross 1976); linear power with temperature coefficient and derating | crystalline modules |
//! | generator fuel | [`drives`] | linear fuel curve, Skarstein & Uhlen (1989) | 0 ≤ P ≤ P_rated |
//! | hand pump | [`drives`] | sustained human power × mechanical efficiency / ρgH, capped by stroke volume | FAO Irrigation and Drainage Paper 43 (Fraenkel 1986) ranges |
//! | hydraulic ram | [`drives`] | D'Aubuisson efficiency q·H/(Q·h); Rankine conversion | lift above supply fall |
//! | pump curve, affinity laws, parallel/series | [`pumps`] | Fritsch & Carlson (1980) monotone interpolation; affinity laws (Karassik et al., *Pump Handbook*) | inside the tabulated flows; no extrapolation |
//! | operating point, speed for power | [`pumps`] | bracketed Illinois root finding | always terminates; reports why not |
//! | positive-displacement pump table | [`displacement`] | the measured table, linear along each axis (no affinity scaling); operating point by bisection | inside the measured heads and powers; outside flagged, never extrapolated |
//! | population, demand profiles, losses | [`demand`] | geometric/arithmetic growth; IWA water balance (Alegre et al. 2006) | — |
//! | discounting, present worth, levelised cost | [`money`] | standard compound-interest factors (Newnan, Eschenbach & Lavelle) | end-of-year cash flows |
//!
//! Synthetic weather (Graham, Hollands & Unny 1988 AR(1) on a Gaussian transform of the daily
//! clearness index, with the Bendt, Collares-Pereira & Rabl 1981 distribution) lives in
//! [`crate::weather`].

pub mod aquifer;
pub mod demand;
pub mod displacement;
pub mod drives;
pub mod money;
pub mod pipes;
pub mod pumping_test;
pub mod pumps;
pub mod solar;
pub mod water;
