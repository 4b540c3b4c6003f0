#include "dsp/filter_prototype.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "dsp/errors.hpp"
#include "dsp/setup.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

// Carlson's symmetric integral RF(x, y, z) by duplication (B. C. Carlson, "Numerical computation of real or
// complex elliptic integrals", Numerical Algorithms 10, 1995, eq. 2.2-2.4). Converges for x, y, z >= 0, at most
// one of them zero.
double carlson_rf(double x, double y, double z) {
    for (int i = 0; i < 200; ++i) {
        const double mu = (x + y + z) / 3.0;
        const double dx = 1.0 - x / mu, dy = 1.0 - y / mu, dz = 1.0 - z / mu;
        if (std::max({std::abs(dx), std::abs(dy), std::abs(dz)}) < 1e-4) {
            // Truncation error below r^6/(4(1-r)) ~ 3e-25 for r = 1e-4.
            const double e2 = dx * dy - dz * dz, e3 = dx * dy * dz;
            return (1.0 - e2 / 10.0 + e3 / 14.0 + e2 * e2 / 24.0 - 3.0 * e2 * e3 / 44.0) / std::sqrt(mu);
        }
        const double sx = std::sqrt(x), sy = std::sqrt(y), sz = std::sqrt(z);
        const double lambda = sx * sy + sy * sz + sz * sx;
        x = (x + lambda) / 4.0;
        y = (y + lambda) / 4.0;
        z = (z + lambda) / 4.0;
    }
    return 1.0 / std::sqrt((x + y + z) / 3.0);
}

void require_order(int order) {
    if (order < 1 || order > kMaxFilterOrder)
        throw InputError("filter order " + std::to_string(order) + " is outside 1.." + std::to_string(kMaxFilterOrder));
}

void require_db(const char* what, double v) {
    if (!std::isfinite(v) || v <= 0.0 || v > 300.0)
        throw InputError(std::string(what) + " " + format_number(v) + " dB: expected a finite number above 0 dB");
}

// Sets the gain so that |H(0)| = dc_gain (all prototypes here have a finite, non-zero DC response).
void normalise_dc(AnalogPrototype& p, double dc_gain) {
    cplx h = 1.0;
    for (const cplx& z : p.zeros) h *= -z;
    for (const cplx& q : p.poles) h /= -q;
    p.gain = dc_gain / std::abs(h);
}

// Chebyshev-shaped pole positions -sinh(mu) sin(theta_k) + j cosh(mu) cos(theta_k), theta_k = (2k-1) pi / (2n).
std::vector<cplx> chebyshev_poles(int n, double mu) {
    std::vector<cplx> p;
    for (int k = 1; k <= n; ++k) {
        const double th = kPi * (2.0 * k - 1.0) / (2.0 * n);
        // The middle pole of an odd order is real: force it so rounding leaves no imaginary residue.
        const double im = (2 * k - 1 == n) ? 0.0 : std::cosh(mu) * std::cos(th);
        p.emplace_back(-std::sinh(mu) * std::sin(th), im);
    }
    return p;
}

AnalogPrototype butterworth(int n) {
    AnalogPrototype p;
    for (int k = 1; k <= n; ++k) {
        const double th = kPi * (2.0 * k + n - 1.0) / (2.0 * n);
        p.poles.emplace_back(std::cos(th), (2 * k - 1 == n) ? 0.0 : std::sin(th));
    }
    normalise_dc(p, 1.0);
    return p;
}

AnalogPrototype chebyshev1(int n, double ripple_db) {
    const double eps = std::sqrt(std::expm1(ripple_db * std::log(10.0) / 10.0));
    AnalogPrototype p;
    p.poles = chebyshev_poles(n, std::asinh(1.0 / eps) / n);
    normalise_dc(p, n % 2 ? 1.0 : 1.0 / std::sqrt(1.0 + eps * eps));
    return p;
}

// Inverse Chebyshev: designed with the stop-band edge at 1, then rescaled to put -3 dB at 1.
AnalogPrototype chebyshev2(int n, double stop_db) {
    const double inv_eps = std::sqrt(std::expm1(stop_db * std::log(10.0) / 10.0));  // 1/eps_s
    AnalogPrototype p;
    for (const cplx& q : chebyshev_poles(n, std::asinh(inv_eps) / n)) p.poles.push_back(1.0 / q);
    for (int k = 1; k <= n; ++k) {
        if (2 * k - 1 == n) continue;  // cos(pi/2) = 0: that zero is at infinity
        p.zeros.emplace_back(0.0, 1.0 / std::cos(kPi * (2.0 * k - 1.0) / (2.0 * n)));
    }
    // |H|^2 = 1 / (1 + 1/(eps_s^2 T_n(1/w)^2)) is 1/2 where T_n(1/w) = 1/eps_s.
    const double w3 = 1.0 / std::cosh(std::acosh(inv_eps) / n);
    for (cplx& z : p.zeros) z /= w3;
    for (cplx& q : p.poles) q /= w3;
    p.stop_edge = 1.0 / w3;
    normalise_dc(p, 1.0);
    return p;
}

// Jacobi theta functions of nome q (0 <= q < 1): theta2, theta3, theta4.
void thetas(double q, double& t2, double& t3, double& t4) {
    t2 = 0.0;
    t3 = 1.0;
    t4 = 1.0;
    for (int i = 0; i < 60; ++i) {
        const double a = std::pow(q, (i + 0.5) * (i + 0.5));
        t2 += 2.0 * a;
        if (i >= 1) {
            const double b = std::pow(q, double(i) * i);
            t3 += 2.0 * b;
            t4 += (i % 2 ? -2.0 : 2.0) * b;
        }
        if (a < 1e-300) break;
    }
}

// Elliptic (Cauer) low-pass: equiripple pass-band (ripple_db) and stop-band (stop_db) for order n. The
// selectivity k follows from the degree equation n K(k1')/K(k1) = K(k')/K(k), solved through the nome
// q = q1^(1/n) and Jacobi's theta functions; zeros are j/(k sn(u_i K, k)); poles come from the addition theorem
// for sn(u_i K + j v0) (A. Antoniou, "Digital Filters: Analysis, Design, and Applications", 2nd ed. 1993, ch. 5,
// from memory; M. Abramowitz & I. Stegun, "Handbook of Mathematical Functions", 1964, 16.21 and 17.3).
AnalogPrototype elliptic(int n, double ripple_db, double stop_db) {
    const double eps_p = std::sqrt(std::expm1(ripple_db * std::log(10.0) / 10.0));
    const double eps_s = std::sqrt(std::expm1(stop_db * std::log(10.0) / 10.0));
    if (!(eps_p < eps_s))
        throw InputError("elliptic filter: stop-band attenuation " + format_number(stop_db) +
                         " dB must exceed the pass-band ripple " + format_number(ripple_db) + " dB");
    const double k1 = eps_p / eps_s;  // discrimination
    const double m1 = k1 * k1, m1c = 1.0 - m1;
    const double K1 = ellip_k(m1c), K1p = ellip_k(m1);
    const double q = std::exp(-kPi * K1p / (n * K1));
    double t2, t3, t4;
    thetas(q, t2, t3, t4);
    const double k = (t2 / t3) * (t2 / t3);  // selectivity: pass-band edge / stop-band edge
    const double kc = (t4 / t3) * (t4 / t3);
    const double m = k * k, mc = kc * kc;
    const double K = ellip_k(mc);

    const double v0 = K * ellip_f(std::atan(1.0 / eps_p), m1c) / (n * K1);
    double sv, cv, dv;
    ellip_jacobi(v0, mc, m, sv, cv, dv);

    AnalogPrototype p;
    for (int i = 0; i <= n / 2; ++i) {
        // u = 2i/n for odd orders (i = 0 is the real pole), (2i+1)/n for even orders.
        const int num = (n % 2) ? 2 * i : 2 * i + 1;
        if (num >= n) break;
        double s, c, d;
        ellip_jacobi(num * K / n, m, mc, s, c, d);
        const double den = 1.0 - (d * sv) * (d * sv);
        const cplx pole(-c * d * sv * cv / den, -s * dv / den);
        if (num == 0) {
            p.poles.emplace_back(pole.real(), 0.0);
        } else {
            p.poles.push_back(pole);
            p.poles.push_back(std::conj(pole));
            const double zim = 1.0 / (k * s);
            p.zeros.emplace_back(0.0, zim);
            p.zeros.emplace_back(0.0, -zim);
        }
    }
    p.stop_edge = 1.0 / k;
    normalise_dc(p, n % 2 ? 1.0 : 1.0 / std::sqrt(1.0 + eps_p * eps_p));
    return p;
}

// Bessel (maximally flat delay): poles are the roots of the reverse Bessel polynomial
// theta_n(s) = sum a_k s^k, a_k = (2n-k)! / (2^(n-k) k! (n-k)!) (W. E. Thomson, "Delay networks having maximally
// flat frequency characteristics", Proc. IEE 96, 1949), found by the Aberth-Ehrlich iteration in long double,
// then scaled so that -3 dB falls at 1.
AnalogPrototype bessel(int n) {
    using ld = long double;
    using cld = std::complex<ld>;
    std::vector<ld> a(static_cast<std::size_t>(n) + 1);
    a[n] = 1.0L;
    for (int k = n; k >= 1; --k) a[k - 1] = a[k] * ld(2 * n - k + 1) * ld(k) / (2.0L * ld(n - k + 1));
    auto eval = [&](const cld& z, cld& dp) {
        cld p = a[n];
        dp = 0.0L;
        for (int k = n - 1; k >= 0; --k) {
            dp = dp * z + p;
            p = p * z + a[k];
        }
        return p;
    };
    const ld r0 = std::pow(a[0], 1.0L / n);
    std::vector<cld> z(static_cast<std::size_t>(n));
    for (int k = 0; k < n; ++k) {
        const ld th = ld(kPi) / 2 + ld(kPi) * (k + 0.5L) / n + 0.1L / n;  // spread over the left half-plane
        z[k] = r0 * cld(std::cos(th), std::sin(th));
    }
    for (int it = 0; it < 1000; ++it) {
        ld worst = 0.0L;
        for (int k = 0; k < n; ++k) {
            cld dp;
            const cld p = eval(z[k], dp);
            if (p == cld(0)) continue;
            const cld ratio = p / dp;
            cld sum = 0.0L;
            for (int j = 0; j < n; ++j)
                if (j != k) sum += 1.0L / (z[k] - z[j]);
            const cld w = ratio / (1.0L - ratio * sum);
            z[k] -= w;
            worst = std::max(worst, std::abs(w) / std::max(std::abs(z[k]), 1e-30L));
        }
        if (worst < 1e-17L) break;
    }
    AnalogPrototype p;
    for (const cld& r : z)
        p.poles.emplace_back(double(r.real()), std::abs(r.imag()) < 1e-14L * std::abs(r) ? 0.0 : double(r.imag()));
    normalise_dc(p, 1.0);
    // |H(jw)| falls monotonically: bracket and bisect the -3 dB point.
    auto mag2 = [&](double w) { return std::norm(prototype_response(p, w)); };
    double lo = 0.0, hi = 1.0;
    while (mag2(hi) > 0.5) hi *= 2.0;
    for (int i = 0; i < 200 && hi - lo > 1e-16 * hi; ++i) {
        const double mid = 0.5 * (lo + hi);
        (mag2(mid) > 0.5 ? lo : hi) = mid;
    }
    const double w3 = 0.5 * (lo + hi);
    for (cplx& q : p.poles) q /= w3;
    normalise_dc(p, 1.0);
    return p;
}

}  // namespace

double ellip_k(double mc) {
    if (mc <= 0.0) return kInf;
    double a = 1.0, b = std::sqrt(mc);
    for (int i = 0; i < 60 && std::abs(a - b) > 1e-16 * a; ++i) {
        const double an = 0.5 * (a + b);
        b = std::sqrt(a * b);
        a = an;
    }
    return kPi / (2.0 * a);
}

double ellip_f(double phi, double m) {
    const double s = std::sin(phi), c = std::cos(phi);
    return s * carlson_rf(c * c, 1.0 - m * s * s, 1.0);
}

// Jacobi sn, cn by the arithmetic-geometric mean (Abramowitz & Stegun 1964, 16.4.2-16.4.3), dn from the identity
// dn^2 + m sn^2 = 1 (A&S 16.9.1).
void ellip_jacobi(double u, double m, double mc, double& sn, double& cn, double& dn) {
    if (m <= 0.0) {
        sn = std::sin(u);
        cn = std::cos(u);
        dn = 1.0;
        return;
    }
    double a[64], c[64];
    a[0] = 1.0;
    c[0] = std::sqrt(m);
    double b = std::sqrt(mc);
    int n = 0;
    while (n < 62 && std::abs(c[n]) > 1e-17) {
        a[n + 1] = 0.5 * (a[n] + b);
        c[n + 1] = 0.5 * (a[n] - b);
        b = std::sqrt(a[n] * b);
        ++n;
    }
    double phi = std::ldexp(a[n] * u, n);
    for (int i = n; i >= 1; --i) phi = 0.5 * (phi + std::asin(c[i] * std::sin(phi) / a[i]));
    sn = std::sin(phi);
    cn = std::cos(phi);
    // dn^2 = 1 - m sn^2 = mc + m cn^2: the second form has no cancellation when m sn^2 is close to 1.
    dn = std::sqrt(mc + m * cn * cn);
}

AnalogPrototype design_prototype(PrototypeKind kind, int order, double ripple_db, double stop_atten_db) {
    require_order(order);
    switch (kind) {
        case PrototypeKind::butterworth:
            return butterworth(order);
        case PrototypeKind::chebyshev1:
            require_db("pass-band ripple", ripple_db);
            return chebyshev1(order, ripple_db);
        case PrototypeKind::chebyshev2:
            require_db("stop-band attenuation", stop_atten_db);
            return chebyshev2(order, stop_atten_db);
        case PrototypeKind::elliptic:
            require_db("pass-band ripple", ripple_db);
            require_db("stop-band attenuation", stop_atten_db);
            return elliptic(order, ripple_db, stop_atten_db);
        case PrototypeKind::bessel:
            return bessel(order);
    }
    return butterworth(order);
}

cplx prototype_response(const AnalogPrototype& p, double omega) {
    if (std::isinf(omega)) return p.zeros.size() == p.poles.size() ? cplx(p.gain) : cplx(0.0);
    const cplx s(0.0, omega);
    cplx h = p.gain;
    // Zeros paired with poles keep every factor near 1 far out, so nothing overflows at high orders.
    for (std::size_t i = 0; i < p.poles.size(); ++i) {
        if (i < p.zeros.size())
            h *= (s - p.zeros[i]) / (s - p.poles[i]);
        else
            h /= (s - p.poles[i]);
    }
    return h;
}

double prototype_group_delay(const AnalogPrototype& p, double omega) {
    if (std::isinf(omega)) return 0.0;
    const cplx s(0.0, omega);
    double tau = 0.0;
    for (const cplx& q : p.poles) tau += (1.0 / (s - q)).real();
    for (const cplx& z : p.zeros)
        if (s != z) tau -= (1.0 / (s - z)).real();
    return tau;
}

double FrequencyMap::omega(double f) const {
    if (!bandpass) return f / edge_hz;
    if (f == 0.0) return -kInf;
    return (f * f - f0_hz * f0_hz) / (f * width_hz);
}

double FrequencyMap::domega_df(double f) const {
    if (!bandpass) return 1.0 / edge_hz;
    if (f == 0.0) return kInf;
    return (f * f + f0_hz * f0_hz) / (f * f * width_hz);
}

void FrequencyMap::edges(double om, double& lo, double& hi) const {
    om = std::abs(om);
    if (!bandpass) {
        lo = -om * edge_hz;
        hi = om * edge_hz;
        return;
    }
    const double r = std::sqrt(om * om * width_hz * width_hz + 4.0 * f0_hz * f0_hz);
    lo = 0.5 * (r - om * width_hz);
    hi = 0.5 * (r + om * width_hz);
}

FrequencyMap lowpass_map(double edge_hz) {
    FrequencyMap m;
    m.bandpass = false;
    m.edge_hz = edge_hz;
    return m;
}

FrequencyMap bandpass_map(double center_hz, double width_hz) {
    FrequencyMap m;
    m.bandpass = true;
    const double f1 = center_hz - 0.5 * width_hz, f2 = center_hz + 0.5 * width_hz;
    m.f0_hz = std::sqrt(f1 * f2);
    m.width_hz = width_hz;
    return m;
}

}  // namespace hb
