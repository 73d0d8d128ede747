#include "tests/timbre_signals.h"

#include "pitch/dsp/real_fft.h"
#include "tests/signals.h"

#include <kiss_fftr.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <random>

namespace beatless::test {

namespace {

constexpr double kTwoPi = 6.283185307179586;

// Magnitude at f of an analogue two-pole resonator at (F, B), unity at DC (Klatt 1980).
double resonator(double f, double F, double B) {
    const double b2 = 0.25 * B * B;
    return (F * F + b2) / std::sqrt(((F - f) * (F - f) + b2) * ((F + f) * (F + f) + b2));
}

// Forward real FFT of x zero-padded to n, a per-bin gain, inverse; first len samples.
template <class Gain>
std::vector<float> filter_fft(const std::vector<float>& x, std::size_t n, std::size_t len, Gain gain) {
    std::vector<float> buf(n, 0.0f);
    std::copy(x.begin(), x.begin() + static_cast<std::ptrdiff_t>(std::min(x.size(), n)), buf.begin());
    std::vector<kiss_fft_cpx> spec(n / 2 + 1);
    kiss_fftr_cfg fwd = kiss_fftr_alloc(static_cast<int>(n), 0, nullptr, nullptr);
    kiss_fftr_cfg inv = kiss_fftr_alloc(static_cast<int>(n), 1, nullptr, nullptr);
    kiss_fftr(fwd, buf.data(), spec.data());
    for (std::size_t k = 0; k < spec.size(); ++k) {
        const std::complex<double> g = gain(k);
        const std::complex<double> v(spec[k].r, spec[k].i);
        const std::complex<double> r = v * g / static_cast<double>(n);
        spec[k].r = static_cast<float>(r.real());
        spec[k].i = static_cast<float>(r.imag());
    }
    kiss_fftri(inv, spec.data(), buf.data());
    kiss_fftr_free(fwd);
    kiss_fftr_free(inv);
    buf.resize(len);
    return buf;
}

double power_of(const std::vector<float>& x) { return mean_square(x); }

}  // namespace

std::vector<float> sung_tone(double rate_hz, std::size_t len, const F0Track& f0, const Voice& v, std::uint64_t seed) {
    const auto g = gaussian(4 * len / 20 + 4096, seed);  // per-cycle draws (enough for 2 kHz)
    const auto noise = gaussian(len + 1, seed ^ 0x5a5a5a5aull);
    std::size_t gi = 0;
    auto draw = [&]() { return g[gi++ % g.size()]; };

    std::vector<double> voiced(len, 0.0), breath(len, 0.0);
    double phi = 0.0;  // fundamental phase, radians (jittered)
    double cycle_rate = 1.0 + v.jitter * draw();
    double gain_prev = 1.0, gain_next = std::pow(10.0, v.shimmer_db * draw() / 20.0);
    constexpr int kMaxPartials = 60;
    double amp[kMaxPartials + 1] = {};
    int partials = 0;
    double prev_noise = 0.0;
    for (std::size_t n = 0; n < len; ++n) {
        const double t = static_cast<double>(n) / rate_hz;
        const double f = f0(t);
        if (n % 32 == 0) {  // partial amplitudes follow the formants as f0 moves
            partials = std::min<int>(kMaxPartials, static_cast<int>(std::min(0.45 * rate_hz, 8000.0) / f));
            for (int l = 1; l <= partials; ++l) {
                const double fl = l * f;
                amp[l] = (1.0 / l) * resonator(fl, v.f1_hz, v.b1_hz) * resonator(fl, v.f2_hz, v.b2_hz) *
                         resonator(fl, v.f3_hz, v.b3_hz);
            }
        }
        const double frac = std::fmod(phi, kTwoPi) / kTwoPi;
        const double gain = gain_prev + (gain_next - gain_prev) * frac;
        double s = 0.0;
        for (int l = 1; l <= partials; ++l) s += amp[l] * std::sin(l * phi);
        voiced[n] = gain * s;
        // Aspiration: first difference of white noise (a rising tilt), louder in the open phase.
        const double w = noise[n] - prev_noise;
        prev_noise = noise[n];
        breath[n] = w * (0.6 + 0.4 * std::cos(phi));
        // Advance the phase by the trapezoid of f0 over the sample; a new cycle draws jitter and shimmer.
        const double f_next = f0(static_cast<double>(n + 1) / rate_hz);
        const double before = std::floor(phi / kTwoPi);
        phi += kTwoPi * 0.5 * (f + f_next) / rate_hz * cycle_rate;
        if (std::floor(phi / kTwoPi) != before) {
            cycle_rate = 1.0 + v.jitter * draw();
            gain_prev = gain_next;
            gain_next = std::pow(10.0, v.shimmer_db * draw() / 20.0);
        }
    }
    double pv = 0.0, pb = 0.0;
    for (std::size_t n = 0; n < len; ++n) {
        pv += voiced[n] * voiced[n];
        pb += breath[n] * breath[n];
    }
    const double bscale =
        (pb > 0.0 && v.aspiration_db > -99.0) ? std::sqrt(pv / pb * std::pow(10.0, v.aspiration_db / 10.0)) : 0.0;
    double peak = 0.0;
    for (std::size_t n = 0; n < len; ++n) {
        voiced[n] += bscale * breath[n];
        peak = std::max(peak, std::fabs(voiced[n]));
    }
    std::vector<float> out(len);
    const double scale = peak > 0.0 ? v.peak / peak : 0.0;
    for (std::size_t n = 0; n < len; ++n) out[n] = static_cast<float>(scale * voiced[n]);
    return out;
}

std::vector<float> bowed_tone(double rate_hz, std::size_t len, const F0Track& f0, double beta, double fundamental_gain,
                              std::uint64_t seed) {
    std::mt19937_64 rng(seed);
    std::vector<double> y(len, 0.0);
    double phi = 0.0;
    double peak = 0.0;
    for (std::size_t n = 0; n < len; ++n) {
        const double t = static_cast<double>(n) / rate_hz;
        const double f = f0(t);
        const int partials = std::min(80, static_cast<int>(0.45 * rate_hz / f));
        double s = 0.0;
        for (int l = 1; l <= partials; ++l) {
            const double a = std::fabs(std::sin(3.141592653589793 * l * beta)) / (static_cast<double>(l) * l) *
                             (l == 1 ? fundamental_gain : 1.0);
            s += a * std::sin(l * phi);
        }
        y[n] = s;
        peak = std::max(peak, std::fabs(s));
        phi += kTwoPi * 0.5 * (f + f0(static_cast<double>(n + 1) / rate_hz)) / rate_hz;
    }
    std::vector<float> out(len);
    for (std::size_t n = 0; n < len; ++n) out[n] = static_cast<float>(0.4 * y[n] / peak);
    return out;
}

std::vector<float> in_room(const std::vector<float>& x, double rate_hz, double rt60_s, double drr_db,
                           std::uint64_t seed) {
    const auto ir_len = static_cast<std::size_t>(rt60_s * rate_hz);
    const auto g = gaussian(ir_len, seed);
    std::vector<float> ir(ir_len, 0.0f);
    double e = 0.0;
    const double decay = std::log(1000.0) / (rt60_s * rate_hz);  // amplitude: -60 dB over rt60
    for (std::size_t n = 1; n < ir_len; ++n) {
        ir[n] = static_cast<float>(g[n] * std::exp(-decay * static_cast<double>(n)));
        e += static_cast<double>(ir[n]) * ir[n];
    }
    const double s = std::sqrt(std::pow(10.0, -drr_db / 10.0) / e);
    for (auto& v : ir) v = static_cast<float>(v * s);
    ir[0] = 1.0f;
    const std::size_t n = pitch::RealFft::fast_size(x.size() + ir_len);
    // Spectrum of the response, then multiply.
    std::vector<float> irp(n, 0.0f);
    std::copy(ir.begin(), ir.end(), irp.begin());
    std::vector<kiss_fft_cpx> h(n / 2 + 1);
    kiss_fftr_cfg fwd = kiss_fftr_alloc(static_cast<int>(n), 0, nullptr, nullptr);
    kiss_fftr(fwd, irp.data(), h.data());
    kiss_fftr_free(fwd);
    auto y = filter_fft(x, n, x.size(), [&](std::size_t k) { return std::complex<double>(h[k].r, h[k].i); });
    // Same peak as the dry signal, so levels stay comparable.
    float px = 0.0f, py = 0.0f;
    for (float v : x) px = std::max(px, std::fabs(v));
    for (float v : y) py = std::max(py, std::fabs(v));
    if (py > 0.0f)
        for (auto& v : y) v *= px / py;
    return y;
}

std::vector<float> band_pass(const std::vector<float>& x, double rate_hz, double low_hz, double high_hz, int order) {
    const std::size_t n = pitch::RealFft::fast_size(x.size() + 4096);
    return filter_fft(x, n, x.size(), [&](std::size_t k) {
        const double f = std::max(1e-3, static_cast<double>(k) * rate_hz / static_cast<double>(n));
        const double hp = 1.0 / std::sqrt(1.0 + std::pow(low_hz / f, 2 * order));
        const double lp = 1.0 / std::sqrt(1.0 + std::pow(f / high_hz, 2 * order));
        return std::complex<double>(hp * lp, 0.0);
    });
}

std::vector<float> coloured_noise(NoiseColour colour, double rate_hz, std::size_t len, std::uint64_t seed) {
    std::vector<float> y;
    if (colour == NoiseColour::babble) {
        std::mt19937_64 rng(seed);
        std::uniform_real_distribution<double> u(0.0, 1.0);
        y.assign(len, 0.0f);
        const Voice vowels[] = {Voice{730, 1090, 2440}, Voice{270, 2290, 3010}, Voice{300, 870, 2240},
                                Voice{530, 1840, 2480}, Voice{570, 840, 2410},  Voice{660, 1720, 2410}};
        for (int k = 0; k < 6; ++k) {
            const double base = 90.0 + 160.0 * u(rng), rate = 1.0 + 2.0 * u(rng), ph = kTwoPi * u(rng);
            const double syl = 3.0 + 2.5 * u(rng), sph = kTwoPi * u(rng);
            Voice v = vowels[k];
            v.jitter = 0.01;
            v.shimmer_db = 0.5;
            v.aspiration_db = -15.0;
            auto s = sung_tone(
                rate_hz, len, [=](double t) { return base * std::exp2(3.0 / 12.0 * std::sin(kTwoPi * rate * t + ph)); },
                v, rng());
            for (std::size_t n = 0; n < len; ++n) {
                const double env =
                    std::pow(std::max(0.0, std::sin(kTwoPi * syl * static_cast<double>(n) / rate_hz + sph)), 2.0);
                y[n] += static_cast<float>(env * s[n]);
            }
        }
    } else {
        const auto g = gaussian(len, seed);
        y.assign(g.begin(), g.end());
        if (colour != NoiseColour::white) {
            const std::size_t n = pitch::RealFft::fast_size(len);
            const double expo = colour == NoiseColour::pink ? 0.5 : 1.0;  // amplitude ~ f^-expo
            y = filter_fft(y, n, len, [&](std::size_t k) {
                const double f = std::max(20.0, static_cast<double>(k) * rate_hz / static_cast<double>(n));
                return std::complex<double>(std::pow(20.0 / f, expo), 0.0);
            });
        }
    }
    const double p = power_of(y);
    const auto s = static_cast<float>(1.0 / std::sqrt(p));
    for (auto& v : y) v *= s;
    return y;
}

void add_noise(std::vector<float>& x, const std::vector<float>& noise, double signal_power, double snr_db) {
    const double np = power_of(noise);
    const double s = std::sqrt(signal_power / std::pow(10.0, snr_db / 10.0) / np);
    for (std::size_t n = 0; n < x.size() && n < noise.size(); ++n) x[n] += static_cast<float>(s * noise[n]);
}

}  // namespace beatless::test
