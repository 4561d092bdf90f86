//! Solar-powered climbers in the Moon's shadow: the exact time of a leg along the tether.
//!
//! A climber moves at its full speed in sunlight. In the shadow (geometry in
//! [`crate::orbit::shadow`]) it runs on its battery at full speed while the battery lasts
//! (drawing `power_w`), then at the shade speed (0: it stops). The Sun angle is a fixed function
//! of mission time, so a leg's time is a deterministic integral of the motion through the lit
//! and dark stretches; no random draw is involved.
//!
//! **Exact, not stepped.** Along a straight stretch at one speed the shadow depth
//! `d(t) = arcsin(R / r(t)) - |psi(t) - psi_c|` (one dark window centred on `psi_c`) is convex
//! on either side of the window's centre (`arcsin(R / r)` is convex in `r`, `r` is linear in
//! `t`, and `|psi - psi_c|` is linear on each side), so on each such piece a convex function
//! crosses zero upwards at most once and its sub-zero set is one interval. The first entry into
//! the shadow is then found by bisection on the first piece whose end is dark, and the first exit
//! by a golden-section minimum and bisection, to a relative time resolution of about 1e-15.
//!
//! **Riding the shadow's edge.** After a dark window's middle the shadow recedes towards the
//! surface at `omega r sqrt(r^2 - R^2) / R` (omega the Sun rate). A climber descending faster
//! than that in light but slower in the dark (shade speed, battery empty) cannot leave the edge:
//! it moves with it (the limit of stop-and-go). This is the only such case (ascending climbers
//! and the window's leading edge are crossed cleanly). It ends at the target, or where the edge
//! has slowed to the shade speed, below which the climber stays dark to the target.
//!
//! **Battery (an engineering assumption).** Full at the start of every leg (charged at the
//! station or the bay) and refilled in every lit stretch (a point on the tether is lit for at
//! least half of every month, far longer than a recharge); empty while riding the edge.

use std::f64::consts::PI;

use crate::orbit::shadow::{shadow_depth_rad, shadow_half_angle_rad};

/// Steps of the leg integration before giving up (a leg takes a handful).
const MAX_STEPS: usize = 10_000;
/// Iterations of the bisections and golden-section searches (to the last bit of a time).
const SEARCH_ITERATIONS: usize = 200;

/// How a solar climber moves in the shadow, and where the Sun is.
#[derive(Clone, Debug, PartialEq)]
pub struct ShadeMotion {
    /// Moon radius, m.
    pub moon_radius_m: f64,
    /// Sun angle rate in the Moon's turning frame, rad/s (one turn per synodic month).
    pub sun_rate_rad_per_s: f64,
    /// Sun angle at mission start, rad (0: Sun above the tether).
    pub sun_angle_at_start_rad: f64,
    /// Speed in the shadow with an empty battery, m/s (0: stop).
    pub shade_speed_m_per_s: f64,
    /// Battery energy, J (0: none).
    pub battery_j: f64,
    /// Power drawn while moving on the battery, W.
    pub power_w: f64,
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Mode {
    Lit,
    Battery,
    Dark,
    Edge,
}

impl ShadeMotion {
    fn psi(&self, t: f64) -> f64 {
        self.sun_angle_at_start_rad + self.sun_rate_rad_per_s * t
    }

    /// Time at which the Sun angle reaches `psi`, s.
    fn time_of(&self, psi: f64) -> f64 {
        (psi - self.sun_angle_at_start_rad) / self.sun_rate_rad_per_s
    }

    /// Centre of the dark window nearest to the Sun angle at `t` (an odd multiple of pi).
    fn window_centre(&self, t: f64) -> f64 {
        let psi = self.psi(t);
        PI + 2.0 * PI * ((psi - PI) / (2.0 * PI)).round()
    }

    fn depth(&self, r: f64, t: f64) -> f64 {
        shadow_depth_rad(self.moon_radius_m, r, self.psi(t))
    }

    /// Whether altitude `altitude_m` is in the shadow at time `t_s`.
    pub fn is_dark(&self, altitude_m: f64, t_s: f64) -> bool {
        self.depth(self.moon_radius_m + altitude_m.max(0.0), t_s) > 0.0
    }

    /// Rate of change of the shadow depth at (`r`, `t`) for a climber moving at `vel` (m/s,
    /// signed, + away from the Moon), rad/s.
    fn depth_rate(&self, r: f64, t: f64, vel: f64) -> f64 {
        let big_r = self.moon_radius_m;
        let own = if vel == 0.0 {
            0.0
        } else {
            // d/dr arcsin(R/r) = -R / (r sqrt(r^2 - R^2)); -inf at the surface.
            let s = (r * r - big_r * big_r).max(0.0).sqrt();
            -big_r / (r * s) * vel
        };
        let side = (self.psi(t) - self.window_centre(t)).signum();
        own - side * self.sun_rate_rad_per_s
    }

    /// First time in `(ta, tb]` at which the climber at `r0` at `ta`, moving at `vel`, enters
    /// the shadow (`to_dark`) or leaves it; `None` if it does not. The depth is below or at 0
    /// (`to_dark`) or above 0 at `ta`.
    fn first_change(&self, r0: f64, vel: f64, ta: f64, tb: f64, to_dark: bool) -> Option<f64> {
        let big_r = self.moon_radius_m;
        let r_at = |t: f64| (r0 + vel * (t - ta)).max(big_r);
        let f = |t: f64| self.depth(r_at(t), t);
        let a_max = shadow_half_angle_rad(big_r, r_at(ta).min(r_at(tb)));
        let mut p = ta;
        let mut guard = 0;
        while p < tb {
            guard += 1;
            if guard > MAX_STEPS {
                return None;
            }
            let c = self.window_centre(p);
            let delta = self.psi(p) - c;
            // Pieces: [-a, 0], [0, a] inside the window, [a, 2 pi - a] outside it.
            let next = if delta < -a_max {
                -a_max
            } else if delta < 0.0 {
                0.0
            } else if delta < a_max {
                a_max
            } else {
                2.0 * PI - a_max
            };
            let inside = (-a_max..a_max).contains(&delta);
            let mut q = self.time_of(c + next).min(tb);
            if q <= p {
                // Rounding at a breakpoint: step over it by one unit in the last place.
                q = f64::from_bits(p.to_bits() + 1).min(tb).max(p);
                if q <= p {
                    return None;
                }
            }
            if !inside {
                if !to_dark {
                    return Some(p); // lit all along this piece: it has left the shadow
                }
            } else if to_dark {
                if f(q) > 0.0 {
                    return Some(bisect(&f, p, q, true));
                }
            } else if f(q) <= 0.0 {
                return Some(bisect(&f, p, q, false));
            } else {
                let m = golden_min(&f, p, q);
                if f(m) <= 0.0 {
                    return Some(bisect(&f, p, m, false));
                }
            }
            p = q;
        }
        None
    }

    /// Arrival time of a leg from altitude `from_m` to `to_m` started at `t0_s` at full speed
    /// `speed_m_per_s` in light, s.
    pub fn arrival_s(&self, from_m: f64, to_m: f64, t0_s: f64, speed_m_per_s: f64) -> f64 {
        let big_r = self.moon_radius_m;
        let mut r = big_r + from_m.max(0.0);
        let r1 = big_r + to_m.max(0.0);
        if r == r1 {
            return t0_s;
        }
        let dir = if r1 > r { 1.0 } else { -1.0 };
        let v = speed_m_per_s;
        let vs = self.shade_speed_m_per_s;
        let clamp = |x: f64| if dir > 0.0 { x.min(r1) } else { x.max(r1) };
        let mut t = t0_s;
        let mut energy = self.battery_j;
        let has_battery = self.battery_j > 0.0 && self.power_w > 0.0;
        let mut mode = if self.depth(r, t) > 0.0 {
            if has_battery {
                Mode::Battery
            } else {
                Mode::Dark
            }
        } else {
            Mode::Lit
        };
        for _ in 0..MAX_STEPS {
            match mode {
                Mode::Lit => {
                    energy = self.battery_j;
                    let tb = t + (r1 - r).abs() / v;
                    let Some(te) = self.first_change(r, dir * v, t, tb, true) else {
                        return tb;
                    };
                    r = clamp(r + dir * v * (te - t));
                    t = te;
                    mode = if has_battery && energy > 0.0 {
                        Mode::Battery
                    } else if self.depth_rate(r, t, dir * vs) < 0.0 {
                        Mode::Edge
                    } else {
                        Mode::Dark
                    };
                }
                Mode::Battery => {
                    let t_arrive = t + (r1 - r).abs() / v;
                    let t_empty = t + energy / self.power_w;
                    let tb = t_arrive.min(t_empty);
                    match self.first_change(r, dir * v, t, tb, false) {
                        Some(te) => {
                            r = clamp(r + dir * v * (te - t));
                            t = te;
                            mode = Mode::Lit;
                        }
                        None if t_arrive <= t_empty => return t_arrive,
                        None => {
                            r = clamp(r + dir * v * (tb - t));
                            t = tb;
                            energy = 0.0;
                            mode = Mode::Dark;
                        }
                    }
                }
                Mode::Dark => {
                    // Stopped: the exit is within the current window (at most half a month).
                    let tb = if vs > 0.0 {
                        t + (r1 - r).abs() / vs
                    } else {
                        self.time_of(self.window_centre(t) + PI)
                    };
                    let Some(te) = self.first_change(r, dir * vs, t, tb, false) else {
                        if vs > 0.0 {
                            return tb;
                        }
                        // Unreachable (a stopped point leaves its window); step past it.
                        t = tb;
                        mode = Mode::Lit;
                        continue;
                    };
                    r = clamp(r + dir * vs * (te - t));
                    t = te;
                    // At the trailing edge: would light motion carry it straight back in?
                    mode = if self.depth_rate(r, t, dir * v) > 0.0 {
                        Mode::Edge
                    } else {
                        Mode::Lit
                    };
                }
                Mode::Edge => {
                    // Only descending, after the window's centre: r_edge = R / sin(psi - c).
                    let c = self.window_centre(t);
                    // Lowest point of the ride: where the edge slows to the shade speed,
                    // r^2 = (R^2 + sqrt(R^4 + 4 (R vs / omega)^2)) / 2 (R itself when vs = 0).
                    let k = big_r * vs / self.sun_rate_rad_per_s;
                    let r_s = ((big_r * big_r + (big_r.powi(4) + 4.0 * k * k).sqrt()) / 2.0).sqrt();
                    if dir > 0.0 {
                        mode = Mode::Lit; // cannot happen; ascending climbers leave the edge
                        continue;
                    }
                    if r1 >= r_s {
                        return self.time_of(c + shadow_half_angle_rad(big_r, r1)).max(t);
                    }
                    let t_s = self.time_of(c + shadow_half_angle_rad(big_r, r_s)).max(t);
                    // Below r_s the shadow recedes more slowly than the climber descends.
                    return t_s + (r_s.min(r) - r1) / vs;
                }
            }
        }
        // Not reached in practice; the light-only time keeps the answer finite.
        t + (r1 - r).abs() / v
    }
}

/// Bisection on `[lo, hi]` for the sign change of `f`: with `to_dark`, `f(lo) <= 0 < f(hi)` and
/// the first dark time is returned; otherwise `f(lo) > 0 >= f(hi)` and the first lit time.
fn bisect(f: &impl Fn(f64) -> f64, mut lo: f64, mut hi: f64, to_dark: bool) -> f64 {
    for _ in 0..SEARCH_ITERATIONS {
        let m = 0.5 * (lo + hi);
        if m <= lo || m >= hi {
            break;
        }
        let dark = f(m) > 0.0;
        if dark == to_dark {
            hi = m;
        } else {
            lo = m;
        }
    }
    hi
}

/// Golden-section minimum of a convex `f` on `[a, b]`.
fn golden_min(f: &impl Fn(f64) -> f64, mut a: f64, mut b: f64) -> f64 {
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let mut c = b - g * (b - a);
    let mut d = a + g * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    for _ in 0..SEARCH_ITERATIONS {
        if b - a <= 1e-12 * b.abs().max(1.0) {
            break;
        }
        if fc < fd {
            b = d;
            d = c;
            fd = fc;
            c = b - g * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + g * (b - a);
            fd = f(d);
        }
    }
    if fc < fd {
        c
    } else {
        d
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::orbit::shadow::sun_rate_rad_per_s;

    const R: f64 = 1_737.4e3;

    fn motion(psi0_deg: f64, vs: f64, battery_j: f64, power_w: f64) -> ShadeMotion {
        ShadeMotion {
            moon_radius_m: R,
            sun_rate_rad_per_s: sun_rate_rad_per_s(),
            sun_angle_at_start_rad: psi0_deg.to_radians(),
            shade_speed_m_per_s: vs,
            battery_j,
            power_w,
        }
    }

    /// Independent answer: the same rules stepped at 1 s.
    fn stepped(m: &ShadeMotion, from: f64, to: f64, t0: f64, v: f64) -> f64 {
        let dt = 1.0;
        let (mut x, mut t, mut e) = (from, t0, m.battery_j);
        let dir = (to - from).signum();
        while (to - x) * dir > 0.0 {
            let dark = m.is_dark(x, t);
            let speed = if !dark {
                e = m.battery_j;
                v
            } else if e > 0.0 {
                e -= m.power_w * dt;
                v
            } else {
                m.shade_speed_m_per_s
            };
            let step = speed * dt;
            if (to - x).abs() <= step {
                return t + (to - x).abs() / speed;
            }
            x += dir * step;
            t += dt;
        }
        t
    }

    #[test]
    fn never_dark_far_from_the_window() {
        // Sun above the tether: a 10-hour climb sees no shade.
        let m = motion(0.0, 0.0, 0.0, 0.0);
        let t = m.arrival_s(0.0, 2_160e3, 0.0, 60.0);
        assert_eq!(t, 2_160e3 / 60.0);
    }

    #[test]
    fn stopped_at_a_dark_station_waits_to_the_trailing_edge() {
        // Sun angle 180 deg at the surface: dark until 270 deg, a quarter month (closed form).
        let m = motion(180.0, 0.0, 0.0, 0.0);
        let t = m.arrival_s(0.0, 5_000e3, 0.0, 60.0);
        let want = 0.25 * crate::orbit::shadow::SYNODIC_MONTH_S + 5_000e3 / 60.0;
        assert!((t - want).abs() < 1e-6 * want, "{t} vs {want}");
    }

    #[test]
    fn legs_agree_with_a_one_second_stepping() {
        let cases = [
            // (psi0 deg, shade speed, battery J, power W, from m, to m, v)
            (150.0, 0.0, 0.0, 0.0, 2_000e3, 20_000e3, 60.0), // caught by the leading edge
            (150.0, 5.0, 0.0, 0.0, 2_000e3, 20_000e3, 60.0), // reduced speed in the dark
            (150.0, 0.0, 3.6e9, 1e5, 2_000e3, 20_000e3, 60.0), // battery for 10 h
            (88.0, 0.0, 0.0, 0.0, 0.0, 20_000e3, 60.0), // leaves the surface ahead of the shade
            // Descending targets stay above the surface, where the edge is so slow that one
            // stepped move of 80 m is an hour of edge motion.
            (200.0, 0.0, 0.0, 0.0, 8_000e3, 500e3, 80.0), // descending: rides the edge
            (200.0, 5.0, 0.0, 0.0, 8_000e3, 100e3, 80.0), // rides, then dark at 5 m/s
            (170.0, 0.0, 0.0, 0.0, 56_000e3, 500e3, 80.0), // from L1 down into the window
        ];
        for (psi0, vs, e, p, from, to, v) in cases {
            let m = motion(psi0, vs, e, p);
            let exact = m.arrival_s(from, to, 0.0, v);
            let step = stepped(&m, from, to, 0.0, v);
            // Stepping errs by about one step per change of speed; at the edge the stepped
            // climber trails the edge by up to one step's travel.
            let tol = 60.0 + 1e-5 * exact;
            assert!(
                (exact - step).abs() < tol,
                "psi0 {psi0} vs {vs}: exact {exact} s, stepped {step} s"
            );
            assert!(exact >= (to - from).abs() / v - 1e-9);
            // Every case but the escape from the surface meets the shadow (hours of delay).
            let delayed = exact - (to - from).abs() / v > 3600.0;
            assert_eq!(delayed, psi0 != 88.0, "psi0 {psi0}: exact {exact} s");
        }
    }
}
