//! PI temperature controller with anti-windup by conditional integration.

/// A PI controller whose output is a heater duty fraction in `0..=cap`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pi {
    kp: f32,
    ki: f32,
    integral: f32,
}

impl Pi {
    /// Gains in duty fraction per °C and per °C·s.
    pub fn new(kp_per_c: f32, ki_per_c_s: f32) -> Self {
        Pi {
            kp: kp_per_c,
            ki: ki_per_c_s,
            integral: 0.0,
        }
    }

    /// Forget the integral (after the heater was forced off).
    pub fn reset(&mut self) {
        self.integral = 0.0;
    }

    /// One update: setpoint and measurement in °C, period in s; returns duty in `0..=cap`.
    /// Without a feed-forward: [`Pi::update_with`] with none.
    pub fn update(&mut self, setpoint_c: f32, measured_c: f32, dt_s: f32, cap: f32) -> f32 {
        self.update_with(0.0, setpoint_c, measured_c, dt_s, cap)
    }

    /// One update with a feed-forward duty `ff` (what the identified fixture needs to follow
    /// the setpoint): the PI corrects around it, so a ramp's power need not wind the integral.
    ///
    /// The integral only moves when the output is not saturated, or when the error would
    /// bring it back out of saturation, so a long ramp cannot wind it up.
    pub fn update_with(
        &mut self,
        ff: f32,
        setpoint_c: f32,
        measured_c: f32,
        dt_s: f32,
        cap: f32,
    ) -> f32 {
        let error = setpoint_c - measured_c;
        let p = self.kp * error;
        let candidate = self.integral + self.ki * error * dt_s;
        let unsaturated = ff + p + candidate;
        let saturated_high = unsaturated > cap && error > 0.0;
        let saturated_low = unsaturated < 0.0 && error < 0.0;
        if !saturated_high && !saturated_low {
            self.integral = candidate.clamp(-cap, cap);
        }
        (ff + p + self.integral).clamp(0.0, cap)
    }

    /// The integral term, duty fraction.
    pub fn integral(&self) -> f32 {
        self.integral
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A first-order plant (heat capacity C, loss G to ambient) driven by the controller
    /// reaches the setpoint without overshooting more than a degree after a long saturation.
    #[test]
    fn settles_on_a_first_order_plant_without_windup_overshoot() {
        let (c_j_per_k, g_w_per_k, p_max_w, ambient) = (150.0f32, 0.5f32, 150.0f32, 22.0f32);
        let mut t = ambient;
        let mut pi = Pi::new(0.08, 0.0015);
        let mut max_t = t;
        for _ in 0..(3600 * 10) {
            let duty = pi.update(100.0, t, 0.1, 0.85);
            t += (duty * p_max_w - g_w_per_k * (t - ambient)) / c_j_per_k * 0.1;
            max_t = max_t.max(t);
        }
        assert!((t - 100.0).abs() < 0.2, "settled at {t}");
        assert!(max_t < 101.5, "overshoot to {max_t}");
    }
}
