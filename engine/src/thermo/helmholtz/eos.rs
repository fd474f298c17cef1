//! The shared evaluator: reduced Helmholtz energy alpha(delta, tau) =
//! alpha0 + alphar and its derivatives, for the term types of the reference
//! equations (R. Span, Multiparameter Equations of State, Springer 2000;
//! IAPWS R6-95(2018) for the non-analytic terms and their derivatives).

/// The ideal part: ln(delta) + a1 + a2 tau + c ln(tau) + sum n tau^t
/// + sum v ln(1 - exp(-theta tau)).
#[derive(Debug)]
pub struct Ideal {
    pub a1: f64,
    pub a2: f64,
    /// c of c ln(tau).
    pub log_tau: f64,
    /// (n, t) of n tau^t.
    pub power: &'static [(f64, f64)],
    /// (v, theta) of v ln(1 - exp(-theta tau)), theta already divided by T_r.
    pub planck_einstein: &'static [(f64, f64)],
}

/// n delta^d tau^t exp(-delta^l) (no exponential when l = 0).
#[derive(Debug)]
pub struct Power {
    pub n: f64,
    pub d: i32,
    pub t: f64,
    pub l: i32,
}

/// n delta^d tau^t exp(-eta (delta - epsilon)^2 - beta (tau - gamma)^2).
#[derive(Debug)]
pub struct Gauss {
    pub n: f64,
    pub d: f64,
    pub t: f64,
    pub eta: f64,
    pub beta: f64,
    pub gamma: f64,
    pub epsilon: f64,
}

/// n Delta^b delta psi with Delta = theta^2 + B ((delta-1)^2)^a,
/// theta = (1 - tau) + A ((delta-1)^2)^(1/(2 beta)),
/// psi = exp(-C (delta-1)^2 - D (tau-1)^2) (IAPWS-95 form).
#[derive(Debug)]
pub struct NonAnalytic {
    pub n: f64,
    pub a: f64,
    pub b: f64,
    pub beta: f64,
    pub big_a: f64,
    pub big_b: f64,
    pub big_c: f64,
    pub big_d: f64,
}

/// n delta^d tau^t exp(eta (delta - epsilon)^2 + 1 / (beta (tau - gamma)^2 + b))
/// (Gao et al. 2020; eta is stored negative).
#[derive(Debug)]
pub struct GaoB {
    pub n: f64,
    pub d: f64,
    pub t: f64,
    pub eta: f64,
    pub beta: f64,
    pub gamma: f64,
    pub epsilon: f64,
    pub b: f64,
}

/// One equation of state.
#[derive(Debug)]
pub struct Coefficients {
    /// kg/mol.
    pub molar_mass: f64,
    /// Specific gas constant of the paper, J/(kg K).
    pub r: f64,
    /// Reducing temperature, K.
    pub t_red: f64,
    /// Reducing density, kg/m^3.
    pub rho_red: f64,
    pub ideal: &'static Ideal,
    pub power: &'static [Power],
    pub gauss: &'static [Gauss],
    pub non_analytic: &'static [NonAnalytic],
    pub gao: &'static [GaoB],
}

/// Residual part and its derivatives, scaled: `d1` = delta ar_delta,
/// `d2` = delta^2 ar_delta_delta, `t1` = tau ar_tau, `t2` = tau^2 ar_tau_tau,
/// `dt` = delta tau ar_delta_tau.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Residual {
    pub a: f64,
    pub d1: f64,
    pub d2: f64,
    pub t1: f64,
    pub t2: f64,
    pub dt: f64,
}

/// Ideal part: alpha0, tau alpha0_tau, tau^2 alpha0_tau_tau.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct IdealPart {
    pub a: f64,
    pub t1: f64,
    pub t2: f64,
}

impl Coefficients {
    /// The residual part at (tau, delta).
    pub fn residual(&self, tau: f64, delta: f64) -> Residual {
        let mut r = Residual::default();
        let ln_d = delta.ln();
        let ln_t = tau.ln();
        // delta^l for the small integer l of the exponential terms.
        let mut dl = [1.0; 8];
        for i in 1..dl.len() {
            dl[i] = dl[i - 1] * delta;
        }
        for p in self.power {
            let d = f64::from(p.d);
            if p.l == 0 {
                let e = p.n * (d * ln_d + p.t * ln_t).exp();
                r.a += e;
                r.d1 += e * d;
                r.d2 += e * d * (d - 1.0);
                r.t1 += e * p.t;
                r.t2 += e * p.t * (p.t - 1.0);
                r.dt += e * p.t * d;
            } else {
                let l = f64::from(p.l);
                let x = dl
                    .get(p.l as usize)
                    .copied()
                    .unwrap_or_else(|| delta.powi(p.l));
                let e = p.n * (d * ln_d + p.t * ln_t - x).exp();
                let k = d - l * x;
                r.a += e;
                r.d1 += e * k;
                r.d2 += e * (k * (k - 1.0) - l * l * x);
                r.t1 += e * p.t;
                r.t2 += e * p.t * (p.t - 1.0);
                r.dt += e * p.t * k;
            }
        }
        for g in self.gauss {
            let dd = delta - g.epsilon;
            let tt = tau - g.gamma;
            let e = g.n * (g.d * ln_d + g.t * ln_t - g.eta * dd * dd - g.beta * tt * tt).exp();
            let kd = g.d - 2.0 * g.eta * delta * dd;
            let kt = g.t - 2.0 * g.beta * tau * tt;
            r.a += e;
            r.d1 += e * kd;
            r.d2 += e * (kd * kd - g.d - 2.0 * g.eta * delta * delta);
            r.t1 += e * kt;
            r.t2 += e * (kt * kt - g.t - 2.0 * g.beta * tau * tau);
            r.dt += e * kd * kt;
        }
        for g in self.gao {
            let dd = delta - g.epsilon;
            let tt = tau - g.gamma;
            let u = g.beta * tt * tt + g.b;
            let e = g.n * (g.d * ln_d + g.t * ln_t + g.eta * dd * dd + 1.0 / u).exp();
            let kd = g.d + 2.0 * g.eta * delta * dd;
            let q = -2.0 * g.beta * tt / (u * u);
            let q1 = -2.0 * g.beta / (u * u) + 8.0 * g.beta * g.beta * tt * tt / (u * u * u);
            let kt = g.t + tau * q;
            r.a += e;
            r.d1 += e * kd;
            r.d2 += e * (kd * kd - g.d + 2.0 * g.eta * delta * delta);
            r.t1 += e * kt;
            r.t2 += e * (kt * kt - g.t + tau * tau * q1);
            r.dt += e * kd * kt;
        }
        for c in self.non_analytic {
            non_analytic(c, tau, delta, &mut r);
        }
        r
    }

    /// The ideal part at (tau, delta).
    pub fn ideal(&self, tau: f64, delta: f64) -> IdealPart {
        let i = self.ideal;
        let ln_t = tau.ln();
        let mut a = delta.ln() + i.a1 + i.a2 * tau + i.log_tau * ln_t;
        let mut t1 = i.a2 * tau + i.log_tau;
        let mut t2 = -i.log_tau;
        for &(n, t) in i.power {
            let e = n * (t * ln_t).exp();
            a += e;
            t1 += e * t;
            t2 += e * t * (t - 1.0);
        }
        for &(v, theta) in i.planck_einstein {
            let x = theta * tau;
            let em = (-x).exp();
            // ln(1 - e^-x); x/(e^x - 1) = x em / (1 - em).
            let om = 1.0 - em;
            a += v * (-em).ln_1p();
            t1 += v * x * em / om;
            t2 -= v * x * x * em / (om * om);
        }
        IdealPart { a, t1, t2 }
    }
}

/// Add the non-analytic term `c` and its derivatives (IAPWS R6-95(2018),
/// Table 5, rearranged so that no negative power of (delta - 1) appears).
fn non_analytic(c: &NonAnalytic, tau: f64, delta: f64, r: &mut Residual) {
    let dm = delta - 1.0;
    let s2 = dm * dm;
    let tm = tau - 1.0;
    let inv2b = 1.0 / (2.0 * c.beta);
    // s2^(1/(2 beta) - 1), s2^(a - 1), s2^(1/beta - 1); exponents >= 0 for
    // the published constants (beta = 0.3, a >= 3).
    let p1 = s2.powf(inv2b - 1.0);
    let pa1 = s2.powf(c.a - 1.0);
    let theta = -tm + c.big_a * s2 * p1;
    let mut big_delta = theta * theta + c.big_b * s2 * pa1;
    if big_delta <= 0.0 {
        big_delta = f64::MIN_POSITIVE;
    }
    let psi = (-c.big_c * s2 - c.big_d * tm * tm).exp();
    let inner = c.big_a * theta * (2.0 / c.beta) * p1 + 2.0 * c.big_b * c.a * pa1;
    let dd_d = dm * inner;
    let dd_dd = inner
        + 4.0 * c.big_b * c.a * (c.a - 1.0) * pa1
        + 2.0 * c.big_a * c.big_a / (c.beta * c.beta) * s2.powf(1.0 / c.beta - 1.0)
        + c.big_a * theta * (4.0 / c.beta) * (inv2b - 1.0) * p1;
    let b = c.b;
    let db_b1 = big_delta.powf(b - 1.0);
    let db = db_b1 * big_delta;
    let db_b2 = db_b1 / big_delta;
    let dbd = b * db_b1 * dd_d;
    let dbdd = b * (db_b1 * dd_dd + (b - 1.0) * db_b2 * dd_d * dd_d);
    let dbt = -2.0 * theta * b * db_b1;
    let dbtt = 2.0 * b * db_b1 + 4.0 * theta * theta * b * (b - 1.0) * db_b2;
    let dbdt = -c.big_a * b * (2.0 / c.beta) * db_b1 * dm * p1
        - 2.0 * theta * b * (b - 1.0) * db_b2 * dd_d;
    let psd = -2.0 * c.big_c * dm * psi;
    let psdd = (2.0 * c.big_c * s2 - 1.0) * 2.0 * c.big_c * psi;
    let pst = -2.0 * c.big_d * tm * psi;
    let pstt = (2.0 * c.big_d * tm * tm - 1.0) * 2.0 * c.big_d * psi;
    let psdt = 4.0 * c.big_c * c.big_d * dm * tm * psi;
    let n = c.n;
    let f = n * db * delta * psi;
    let fd = n * (db * (psi + delta * psd) + dbd * delta * psi);
    let fdd = n
        * (db * (2.0 * psd + delta * psdd) + 2.0 * dbd * (psi + delta * psd) + dbdd * delta * psi);
    let ft = n * delta * (dbt * psi + db * pst);
    let ftt = n * delta * (dbtt * psi + 2.0 * dbt * pst + db * pstt);
    let fdt = n
        * (db * (pst + delta * psdt)
            + delta * dbd * pst
            + dbt * (psi + delta * psd)
            + dbdt * delta * psi);
    r.a += f;
    r.d1 += delta * fd;
    r.d2 += delta * delta * fdd;
    r.t1 += tau * ft;
    r.t2 += tau * tau * ftt;
    r.dt += delta * tau * fdt;
}

/// How an ancillary equation is written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AncForm {
    /// y = y_r exp(f sum n theta^t), f = T_r/T if `using_tau_r`, else 1.
    Exp,
    /// y = y_r (1 + sum n theta^t).
    NoExp,
}

/// An ancillary equation for a saturation property (starting values only),
/// theta = 1 - T/T_r.
#[derive(Debug)]
pub struct Ancillary {
    pub form: AncForm,
    pub using_tau_r: bool,
    pub t_r: f64,
    /// Reducing value: Pa for pressure, kg/m^3 for density.
    pub reducing: f64,
    pub n: &'static [f64],
    pub t: &'static [f64],
}

impl Ancillary {
    /// ln y and d(ln y)/dT of an exponential-form ancillary (the pressure).
    pub fn ln_and_slope(&self, t: f64) -> (f64, f64) {
        let theta = (1.0 - t / self.t_r).max(0.0);
        let (mut sum, mut dsum) = (0.0, 0.0);
        if theta > 0.0 {
            let lt = theta.ln();
            for (n, e) in self.n.iter().zip(self.t) {
                let x = n * (e * lt).exp();
                sum += x;
                dsum += x * e / theta;
            }
        }
        // d theta / dT = -1/T_r.
        dsum *= -1.0 / self.t_r;
        let (f, df) = if self.using_tau_r {
            (self.t_r / t, -self.t_r / (t * t))
        } else {
            (1.0, 0.0)
        };
        match self.form {
            AncForm::Exp => (self.reducing.ln() + f * sum, df * sum + f * dsum),
            AncForm::NoExp => {
                let y = 1.0 + sum;
                ((self.reducing * y).ln(), dsum / y)
            }
        }
    }

    pub fn eval(&self, t: f64) -> f64 {
        let theta = (1.0 - t / self.t_r).max(0.0);
        let mut sum = 0.0;
        if theta > 0.0 {
            let lt = theta.ln();
            for (n, e) in self.n.iter().zip(self.t) {
                sum += n * (e * lt).exp();
            }
        }
        match self.form {
            AncForm::Exp => {
                let f = if self.using_tau_r { self.t_r / t } else { 1.0 };
                self.reducing * (f * sum).exp()
            }
            AncForm::NoExp => self.reducing * (1.0 + sum),
        }
    }
}

/// A melting line p_m = p_0 (1 + sum a (T/T_0 - 1)^t), valid from T_0 to
/// t_max (above t_max the melting pressure exceeds the equation's range).
#[derive(Debug)]
pub struct Melting {
    pub t_0: f64,
    pub p_0: f64,
    pub t_max: f64,
    /// (a, t) pairs.
    pub terms: &'static [(f64, f64)],
}

impl Melting {
    /// Melting pressure at t (Pa), `None` above t_max.
    pub fn p(&self, t: f64) -> Option<f64> {
        if t > self.t_max {
            return None;
        }
        let theta = (t / self.t_0 - 1.0).max(0.0);
        Some(
            self.p_0
                * (1.0
                    + self
                        .terms
                        .iter()
                        .map(|&(a, e)| a * theta.powf(e))
                        .sum::<f64>()),
        )
    }
}
