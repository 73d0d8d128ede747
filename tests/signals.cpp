#include "tests/signals.h"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <random>

namespace beatless::test {

namespace {
constexpr double kTwoPi = 2.0 * std::numbers::pi;

// Sum of the partials at fundamental phase phi.
double partial_sum(std::span<const Partial> partials, double phi) {
    double s = 0.0;
    for (const auto& p : partials) s += p.amplitude * std::cos(p.number * phi + p.phase_rad);
    return s;
}
}  // namespace

std::vector<Partial> falling_partials(double max_f0_hz, double rate_hz, int max_partials, double db_per_octave,
                                      std::uint64_t seed, double peak, double nyquist_fraction) {
    std::mt19937_64 rng(seed);
    std::vector<Partial> out;
    double total = 0.0;
    for (int l = 1; l <= max_partials; ++l) {
        if (l * max_f0_hz > nyquist_fraction * rate_hz / 2.0) break;
        const double a = std::pow(10.0, -db_per_octave * std::log2(static_cast<double>(l)) / 20.0);
        // 53 random bits to a uniform phase in [0, 2 pi).
        const double u = static_cast<double>(rng() >> 11) * 0x1.0p-53;
        out.push_back({l, a, kTwoPi * u});
        total += a;
    }
    for (auto& p : out) p.amplitude *= peak / total;
    return out;
}

std::vector<Partial> without(std::vector<Partial> partials, std::span<const int> numbers) {
    std::erase_if(partials, [&](const Partial& p) {
        return std::find(numbers.begin(), numbers.end(), p.number) != numbers.end();
    });
    return partials;
}

double harmonic_power(std::span<const Partial> partials) {
    double p = 0.0;
    for (const auto& q : partials) p += q.amplitude * q.amplitude / 2.0;
    return p;
}

std::vector<float> sine(double rate_hz, std::size_t len, double freq_hz, double amplitude, double phase_rad) {
    std::vector<float> x(len);
    for (std::size_t n = 0; n < len; ++n)
        x[n] =
            static_cast<float>(amplitude * std::sin(kTwoPi * freq_hz * static_cast<double>(n) / rate_hz + phase_rad));
    return x;
}

std::vector<float> harmonic_tone(double rate_hz, std::size_t len, double f0_hz, std::span<const Partial> partials) {
    std::vector<float> x(len);
    for (std::size_t n = 0; n < len; ++n) {
        // Reduce the phase modulo 2 pi in exact steps to keep long tones precise.
        const double cycles = f0_hz * static_cast<double>(n) / rate_hz;
        const double phi = kTwoPi * (cycles - std::floor(cycles));
        x[n] = static_cast<float>(partial_sum(partials, phi));
    }
    return x;
}

std::vector<float> harmonic_tone_fm(double rate_hz, std::size_t len, const std::function<double(double)>& f0_of_t,
                                    std::span<const Partial> partials) {
    std::vector<float> x(len);
    const double dt = 1.0 / rate_hz;
    double cycles = 0.0;  // integral of f0, in cycles, kept in [0, 1)
    for (std::size_t n = 0; n < len; ++n) {
        x[n] = static_cast<float>(partial_sum(partials, kTwoPi * cycles));
        const double t = static_cast<double>(n) * dt;
        // Simpson's rule over [t, t + dt].
        cycles += dt / 6.0 * (f0_of_t(t) + 4.0 * f0_of_t(t + dt / 2.0) + f0_of_t(t + dt));
        cycles -= std::floor(cycles);
    }
    return x;
}

double Vibrato::f0_hz(double t_s) const {
    return centre_hz * std::exp2(depth_cents / 1200.0 * std::sin(kTwoPi * rate_hz * t_s + phase_rad));
}

std::vector<float> vibrato_tone(double rate_hz, std::size_t len, const Vibrato& v, std::span<const Partial> partials) {
    return harmonic_tone_fm(
        rate_hz, len, [&](double t) { return v.f0_hz(t); }, partials);
}

double Glide::f0_hz(double t_s) const { return start_hz * std::exp2(cents_per_s * t_s / 1200.0); }

double Glide::phase_rad(double t_s) const {
    if (cents_per_s == 0.0) return kTwoPi * start_hz * t_s;
    const double k = cents_per_s * std::numbers::ln2 / 1200.0;  // f0 = start * e^(k t)
    return kTwoPi * start_hz * std::expm1(k * t_s) / k;
}

std::vector<float> glide_tone(double rate_hz, std::size_t len, const Glide& g, std::span<const Partial> partials) {
    std::vector<float> x(len);
    for (std::size_t n = 0; n < len; ++n) {
        const double phi = std::fmod(g.phase_rad(static_cast<double>(n) / rate_hz), kTwoPi);
        x[n] = static_cast<float>(partial_sum(partials, phi));
    }
    return x;
}

std::vector<float> silence(std::size_t len) { return std::vector<float>(len, 0.0f); }

std::vector<double> gaussian(std::size_t len, std::uint64_t seed) {
    std::mt19937_64 rng(seed);
    std::vector<double> g(len);
    for (std::size_t n = 0; n < len; n += 2) {
        // u1 in (0, 1], u2 in [0, 1).
        const double u1 = (static_cast<double>(rng() >> 11) + 1.0) * 0x1.0p-53;
        const double u2 = static_cast<double>(rng() >> 11) * 0x1.0p-53;
        const double r = std::sqrt(-2.0 * std::log(u1));
        g[n] = r * std::cos(kTwoPi * u2);
        if (n + 1 < len) g[n + 1] = r * std::sin(kTwoPi * u2);
    }
    return g;
}

double add_white_noise(std::vector<float>& x, double signal_power, double snr_db, std::uint64_t seed) {
    const double var = signal_power / std::pow(10.0, snr_db / 10.0);
    const double sd = std::sqrt(var);
    const auto g = gaussian(x.size(), seed);
    for (std::size_t n = 0; n < x.size(); ++n) x[n] = static_cast<float>(x[n] + sd * g[n]);
    return var;
}

double mean_square(std::span<const float> x) {
    double s = 0.0;
    for (float v : x) s += static_cast<double>(v) * v;
    return x.empty() ? 0.0 : s / static_cast<double>(x.size());
}

double cents(double a_hz, double b_hz) { return 1200.0 * std::log2(a_hz / b_hz); }

double harmonic_crb_cents(std::span<const Partial> partials, double f0_hz, double rate_hz, double noise_var,
                          std::size_t n) {
    double s = 0.0;
    for (const auto& p : partials) s += static_cast<double>(p.number) * p.number * p.amplitude * p.amplitude;
    const double nn = static_cast<double>(n);
    const double var_w0 = 24.0 * noise_var / (nn * nn * nn * s);
    const double w0 = kTwoPi * f0_hz / rate_hz;
    return 1200.0 / std::numbers::ln2 * std::sqrt(var_w0) / w0;
}

}  // namespace beatless::test
