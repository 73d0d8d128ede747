// RootDetector — the method in detail (summary in root_detect.h).
//
// Steps: (1) Hann-windowed long FFT frames (KissFFT, real, out of place) at
// a hop of a third of a frame (0.25 s: 1.25-1.75 periods of a 5-7 Hz
// vibrato, so a vibrato's phase advance never repeats from hop to hop);
// (2) per bin, accumulate the power, the cross spectrum X_i conj(X_{i-1})
// of consecutive frames with its magnitude sum, and how often the bin is a
// clear peak (15 dB over the frame's median); (3) harmonic summation (A.
// Klapuri, "Multiple fundamental frequency estimation by summing harmonic
// amplitudes", ISMIR 2006; 1/h weights) over the steady spectrum
// |sum X_i conj(X_{i-1})|, where a moving voice's terms largely cancel,
// with one candidate per +-60 cents; (4) per candidate, each harmonic's
// frequency from the phase of its accumulated cross spectrum (the phase-
// vocoder estimate, J. L. Flanagan and R. M. Golden, "Phase vocoder", Bell
// Syst. Tech. J. 45, 1966: exact for a steady partial); (5) mode seeking:
// the harmonics whose f_h / h agree within 0.5 cent, evidence weighted by
// steady power * (presence * coherence)^4, averaged with inverse-variance
// weights; a second pass looks only in each harmonic's own bin. Confidence
// is presence times coherence (|sum of cross spectra| / sum of their
// magnitudes), halved when a lone upper partial is all that agrees; the
// answer is the candidate with the largest salience * confidence^4.
// Memory is constant: a few arrays of one frame's bins, whatever the length.
// All allocation happens in the constructor; push() and estimate() never allocate.

#include "pitch/measure/root_detect.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>

namespace beatless::pitch {

namespace {
constexpr double kTwoPi = 6.283185307179586476925286766559;
constexpr double kGridCents = 3.0;       // salience grid step
constexpr double kPeakOverFloor = 31.6;  // 15 dB over the median power: a clear peak
constexpr double kTwinBin = 0.794;       // 1 dB: a lower neighbour this strong takes the peak
constexpr double kKeepOverFloor = 10.0;  // 10 dB over the averaged median: a usable harmonic
constexpr double kAgreeCents = 0.5;      // harmonics of one steady tone agree within this
// Vibrato sidebands: a voice with a regular vibrato has a steady carrier at
// its centre (the J0 term of frequency modulation), which can look like a
// drone; but its partials also carry sidebands at the vibrato rate and its
// multiples (J1, J2 ...; FM spectrum, J. R. Carson 1922). Power 4-12 Hz
// from a partial (3-9 bins at the default 0.75 s frame) relative to the
// partial itself above 1 % (-20 dB; a Hann window leaks less than -40 dB
// that far, from memory of its sidelobe table) marks it as modulated.
constexpr double kSideNearHz = 4.0;
constexpr double kSideFarHz = 12.0;
constexpr double kSideRatio = 0.01;

void check(bool ok, const char* what, double v) {
    if (!ok) throw Error("root detection: " + std::string(what) + " " + format_trimmed(v, 6) + " is out of range");
}
}  // namespace

RootDetector::RootDetector(const RootDetectConfig& config) : cfg_(config) {
    check(cfg_.sample_rate_hz >= 8000.0 && cfg_.sample_rate_hz <= 192000.0, "sample rate (Hz)", cfg_.sample_rate_hz);
    check(cfg_.frame_s >= 0.05 && cfg_.frame_s <= 4.0, "frame_s", cfg_.frame_s);
    check(cfg_.f_min_hz >= 10.0 && cfg_.f_min_hz < cfg_.f_max_hz, "f_min_hz", cfg_.f_min_hz);
    check(cfg_.f_max_hz < 0.25 * cfg_.sample_rate_hz, "f_max_hz", cfg_.f_max_hz);
    check(cfg_.max_harmonic >= 1 && cfg_.max_harmonic <= 64, "max_harmonic", cfg_.max_harmonic);
    check(cfg_.max_freq_hz > cfg_.f_max_hz, "max_freq_hz", cfg_.max_freq_hz);
    check(cfg_.hops_per_frame >= 3 && cfg_.hops_per_frame <= 32, "hops_per_frame", cfg_.hops_per_frame);
    check(cfg_.min_confidence >= 0.0 && cfg_.min_confidence <= 1.0, "min_confidence", cfg_.min_confidence);

    n_ = RealFft::fast_size(static_cast<std::size_t>(std::ceil(cfg_.frame_s * cfg_.sample_rate_hz)));
    const auto hops = static_cast<std::size_t>(cfg_.hops_per_frame);
    while (n_ % hops != 0) n_ = RealFft::fast_size(n_ + 1);  // a whole number of samples per hop
    hop_ = n_ / hops;
    bin_hz_ = cfg_.sample_rate_hz / static_cast<double>(n_);
    kmax_ = std::min(n_ / 2 - 2,
                     static_cast<std::size_t>(std::min(cfg_.max_freq_hz, 0.45 * cfg_.sample_rate_hz) / bin_hz_));
    check(bin_hz_ < 0.25 * cfg_.f_min_hz, "f_min_hz for this frame length", cfg_.f_min_hz);

    fft_ = std::make_unique<RealFft>(n_);
    window_ = make_window(WindowKind::hann, n_);
    buf_.assign(n_, 0.0f);
    in_.assign(n_, 0.0f);
    spec_.assign(n_ / 2 + 1, {});
    prev_.assign(n_ / 2 + 1, {});
    power_.assign(kmax_ + 2, 0.0);
    cross_.assign(kmax_ + 2, {});
    cross_mag_.assign(kmax_ + 2, 0.0);
    peaks_.assign(kmax_ + 2, 0);
    scratch_.assign(kmax_ + 2, 0.0);
    steady_.assign(kmax_ + 2, 0.0);
    const auto cands = static_cast<std::size_t>(1200.0 * std::log2(cfg_.f_max_hz / cfg_.f_min_hz) / kGridCents) + 1;
    cand_s_.assign(cands, 0.0);
    parts_.reserve(static_cast<std::size_t>(cfg_.max_harmonic));
}

void RootDetector::reset() noexcept {
    fill_ = 0;
    prev_valid_ = false;
    std::fill(power_.begin(), power_.end(), 0.0);
    std::fill(cross_.begin(), cross_.end(), std::complex<double>{});
    std::fill(cross_mag_.begin(), cross_mag_.end(), 0.0);
    std::fill(peaks_.begin(), peaks_.end(), 0u);
    frames_ = bad_ = total_ = 0;
    padded_ = false;
}

void RootDetector::push(std::span<const float> samples) noexcept {
    std::size_t i = 0;
    while (i < samples.size()) {
        const std::size_t take = std::min(samples.size() - i, n_ - fill_);
        for (std::size_t j = 0; j < take; ++j) {
            float v = samples[i + j];
            if (!std::isfinite(v)) {
                v = 0.0f;
                ++bad_;
            }
            buf_[fill_ + j] = v;
        }
        fill_ += take;
        i += take;
        total_ += take;
        if (fill_ == n_) {
            process_frame(n_);
            std::memmove(buf_.data(), buf_.data() + hop_, (n_ - hop_) * sizeof(float));
            fill_ = n_ - hop_;
        }
    }
}

void RootDetector::process_frame(std::size_t valid) noexcept {
    double ss = 0.0;
    for (std::size_t i = 0; i < valid; ++i) ss += static_cast<double>(buf_[i]) * buf_[i];
    const double rms = std::sqrt(ss / static_cast<double>(std::max<std::size_t>(valid, 1)));
    if (!(rms > std::pow(10.0, cfg_.silence_dbfs / 20.0))) {
        prev_valid_ = false;
        return;
    }
    for (std::size_t i = 0; i < n_; ++i) in_[i] = i < valid ? window_[i] * buf_[i] : 0.0f;
    fft_->forward(in_.data(), spec_.data());

    const std::size_t k_lo = 1;
    for (std::size_t k = k_lo; k <= kmax_; ++k) {
        const std::complex<double> x(spec_[k]);
        const double p = std::norm(x);
        power_[k] += p;
        scratch_[k] = p;
        if (prev_valid_) {
            const std::complex<double> y(prev_[k]);
            cross_[k] += x * std::conj(y);
            cross_mag_[k] += std::sqrt(p * std::norm(y));  // |x| |y| without two hypot() calls
        }
    }
    // Clear peaks: local maxima 15 dB over this frame's median bin power.
    const std::size_t nb = kmax_ - k_lo + 1;
    std::nth_element(scratch_.begin() + k_lo, scratch_.begin() + k_lo + nb / 2, scratch_.begin() + kmax_ + 1);
    const double thr = kPeakOverFloor * scratch_[k_lo + nb / 2];
    // A partial half-way between two bins makes them equally strong, and
    // which one peaks is down to noise: when the lower neighbour is within
    // 1 dB of the peak, the peak is counted there, so such a partial (every
    // odd harmonic of a root on a half bin) is present in every frame of one
    // bin rather than in half the frames of each. Each peak counts once.
    for (std::size_t k = k_lo + 1; k < kmax_; ++k) {
        const double p = std::norm(spec_[k]);
        const double pl = std::norm(spec_[k - 1]);
        if (!(p > thr && p > pl && p >= std::norm(spec_[k + 1]))) continue;
        ++peaks_[pl >= kTwinBin * p ? k - 1 : k];
    }
    std::swap(spec_, prev_);
    prev_valid_ = true;
    ++frames_;
}

double RootDetector::salience(double f0_hz) const noexcept {
    double s = 0.0;
    for (int h = 1; h <= cfg_.max_harmonic; ++h) {
        const double f = h * f0_hz;
        const double c = f / bin_hz_;
        if (c + 2.0 > static_cast<double>(kmax_)) break;
        const auto r = 1 + static_cast<std::size_t>(f * 0.0009 / bin_hz_);
        const auto kc = static_cast<std::size_t>(std::lround(c));
        double best = 0.0;
        for (std::size_t k = kc > r ? kc - r : 1; k <= std::min(kc + r, kmax_); ++k) best = std::max(best, steady_[k]);
        s += std::sqrt(best) / h;
    }
    return s;
}

RootEstimate RootDetector::refine(double f0_guess, bool tight) noexcept {
    RootEstimate e;
    e.root_hz = f0_guess;
    e.status = RootStatus::no_steady_root;
    e.sounding_s = static_cast<double>(frames_ * hop_) / cfg_.sample_rate_hz;
    const double floor_power = scratch_[0];  // averaged median, set by estimate()
    parts_.clear();
    for (int h = 1; h <= cfg_.max_harmonic; ++h) {
        const double f = h * f0_guess;
        const double c = f / bin_hz_;
        if (c + 3.0 > static_cast<double>(kmax_)) break;
        const auto r = tight ? std::size_t{1} : 2 + static_cast<std::size_t>(std::ceil(f * 0.0035 / bin_hz_));
        const auto kc = static_cast<std::size_t>(std::lround(c));
        std::size_t k = kc;
        for (std::size_t j = kc > r + 1 ? kc - r : 2; j <= std::min(kc + r, kmax_ - 1); ++j)
            if (steady_[j] > steady_[k]) k = j;
        if (k < 2 || k + 1 > kmax_) continue;
        if (!(steady_[k] >= steady_[k - 1] && steady_[k] >= steady_[k + 1])) continue;
        if (!(steady_[k] > kKeepOverFloor * floor_power)) continue;
        const std::complex<double> cs = cross_[k - 1] + cross_[k] + cross_[k + 1];
        const double mag = cross_mag_[k - 1] + cross_mag_[k] + cross_mag_[k + 1];
        double fk = 0.0, coh = 0.0;
        if (std::abs(cs) > 0.0 && mag > 0.0) {
            // Phase advance over one hop, unwrapped around the bin centre.
            const double expected =
                kTwoPi * static_cast<double>(k) * static_cast<double>(hop_) / static_cast<double>(n_);
            const double d = std::remainder(std::arg(cs) - expected, kTwoPi);
            fk =
                (static_cast<double>(k) + d * static_cast<double>(n_) / (kTwoPi * static_cast<double>(hop_))) * bin_hz_;
            coh = std::abs(cs) / mag;
        } else {
            // One frame only: parabolic interpolation of the log power.
            const double a = std::log(power_[k - 1] + 1e-300), b = std::log(power_[k]),
                         g = std::log(power_[k + 1] + 1e-300);
            const double den = a - 2.0 * b + g;
            const double off = den < 0.0 ? 0.5 * (a - g) / den : 0.0;
            fk = (static_cast<double>(k) + off) * bin_hz_;
            coh = 0.0;
        }
        const double pres =
            static_cast<double>(std::max({peaks_[k - 1], peaks_[k], peaks_[k + 1]})) / static_cast<double>(frames_);
        // Purity: 1 for a partial without vibrato sidebands, towards 0 with them.
        double side = 0.0;
        const double main_power = power_[k - 1] + power_[k] + power_[k + 1];
        const auto near_b = static_cast<std::size_t>(std::ceil(kSideNearHz / bin_hz_));
        const auto far_b = static_cast<std::size_t>(kSideFarHz / bin_hz_);
        // Sidebands come in pairs, J_n at -n and +n times the rate with equal
        // power (Carson 1922): the weaker of the two sides counts, so another
        // tone's partial a few Hz to one side (a low drone under a voice:
        // their partials crowd within 12 Hz) is not taken for vibrato.
        for (std::size_t d = std::max<std::size_t>(near_b, 2); d <= far_b && d < k && k + d <= kmax_; ++d)
            side = std::max(side, std::min(power_[k - d], power_[k + d]));
        const double purity = main_power > 0.0 ? 1.0 / (1.0 + side / (kSideRatio * main_power)) : 0.0;
        // Inverse variance of f_h / h (power * h^2), times (presence *
        // coherence)^4 so a louder but intermittent voice partial cannot outvote the drone.
        const double pc = std::max(pres * coh, 1e-3);  // a lone frame has no coherence yet
        const double pc2 = pc * pc;
        const double w = steady_[k] * h * h * pc2 * pc2 * purity * purity;
        parts_.push_back({fk / h, w, steady_[k], pres, coh, purity, h});
    }
    if (parts_.empty()) return e;

    // Mode seeking: the harmonic whose f_h / h gathers the most evidence within
    // kAgreeCents, then the weighted mean of those that agree with it (a steady
    // drone's harmonics agree to hundredths of a cent; a voice's do not).
    std::size_t best_i = 0;
    double best_w = -1.0;
    for (std::size_t i = 0; i < parts_.size(); ++i) {
        double w = 0.0;
        for (const Part& q : parts_)
            if (std::fabs(1200.0 * std::log2(q.f0_hz / parts_[i].f0_hz)) <= kAgreeCents)
                w += q.weight / (q.harmonic * q.harmonic);  // evidence counts each partial's steady power once
        if (w > best_w) {
            best_w = w;
            best_i = i;
        }
    }
    double centre = parts_[best_i].f0_hz;
    double sw = 0.0, sp = 0.0, spp = 0.0, spc = 0.0, spu = 0.0, sd = 0.0;
    int used = 0;
    double max_w = 0.0;
    for (int pass = 0; pass < 2; ++pass) {
        double swf = 0.0;
        sw = sp = spp = spc = spu = sd = 0.0;
        used = 0;
        for (const Part& p : parts_) {
            const double d = 1200.0 * std::log2(p.f0_hz / centre);
            if (std::fabs(d) > kAgreeCents) continue;
            sw += p.weight;
            swf += p.weight * p.f0_hz;
            sp += p.power;
            spp += p.power * p.presence;
            spc += p.power * p.coherence;
            spu += p.power * p.purity;
            max_w = std::max(max_w, p.weight);
            ++used;
        }
        centre = swf / sw;
    }
    int strong = 0, lowest_h = 0;  // agreeing harmonics that carry real weight
    for (const Part& p : parts_) {
        const double d = 1200.0 * std::log2(p.f0_hz / centre);
        if (std::fabs(d) > kAgreeCents) continue;
        sd += p.weight * d * d;
        if (p.weight < 1e-2 * max_w) continue;
        if (strong++ == 0 || p.harmonic < lowest_h) lowest_h = p.harmonic;
    }
    e.root_hz = centre;
    e.spread_cents = std::sqrt(sd / sw);
    e.harmonics_used = used;
    e.presence = spp / sp;
    e.coherence = spc / sp;
    e.confidence = e.presence * e.coherence * (spu / sp);
    // A lone upper partial is no evidence of a tone at this root (it is
    // usually another tone's harmonic); a lone fundamental (a sine drone) is.
    if (strong == 1 && lowest_h > 1) e.confidence *= 0.5;
    if (e.confidence >= cfg_.min_confidence) e.status = RootStatus::found;
    return e;
}

RootEstimate RootDetector::estimate() noexcept {
    if (frames_ == 0 && !padded_ && fill_ > 0 && total_ < n_) {
        padded_ = true;
        process_frame(fill_);
    }
    RootEstimate none;
    if (frames_ == 0) return none;

    // Median of the averaged power: the floor a usable harmonic must clear.
    // The steady spectrum: the magnitude of the summed cross spectra keeps a
    // steady partial's power and cancels much of a moving voice's (a single
    // frame has no cross spectrum: its power stands in).
    for (std::size_t k = 1; k <= kmax_; ++k) steady_[k] = frames_ > 1 ? std::abs(cross_[k]) : power_[k];
    for (std::size_t k = 1; k <= kmax_; ++k) scratch_[k] = steady_[k];
    std::nth_element(scratch_.begin() + 1, scratch_.begin() + 1 + kmax_ / 2, scratch_.begin() + kmax_ + 1);
    scratch_[0] = scratch_[1 + kmax_ / 2];

    for (std::size_t i = 0; i < cand_s_.size(); ++i)
        cand_s_[i] = salience(cfg_.f_min_hz * std::exp2(kGridCents * static_cast<double>(i) / 1200.0));

    // The strongest local maxima of the salience, each refined and scored by
    // salience * confidence^4: steadiness decides between a quiet drone and a
    // louder moving voice, salience between a root and its subharmonics.
    constexpr std::size_t kTop = 12;
    std::array<std::size_t, kTop> top{};
    std::size_t ntop = 0;
    // Local maxima over +-60 cents, so one broad voice region offers one
    // candidate rather than crowding out a quieter drone.
    const auto reach = static_cast<std::size_t>(60.0 / kGridCents);
    for (std::size_t i = 0; i < cand_s_.size(); ++i) {
        bool peak = cand_s_[i] > 0.0;
        for (std::size_t j = i > reach ? i - reach : 0; peak && j <= std::min(cand_s_.size() - 1, i + reach); ++j)
            peak = j == i || (j < i ? cand_s_[j] < cand_s_[i] : cand_s_[j] <= cand_s_[i]);
        if (!peak) continue;
        if (ntop < kTop)
            top[ntop++] = i;
        else {
            std::size_t weakest = 0;
            for (std::size_t j = 1; j < kTop; ++j)
                if (cand_s_[top[j]] < cand_s_[top[weakest]]) weakest = j;
            if (cand_s_[i] > cand_s_[top[weakest]]) top[weakest] = i;
        }
    }
    RootEstimate best;
    double best_score = -1.0;
    for (std::size_t j = 0; j < ntop; ++j) {
        const double f = cfg_.f_min_hz * std::exp2(kGridCents * static_cast<double>(top[j]) / 1200.0);
        RootEstimate e = refine(f, false);
        if (e.harmonics_used > 0) e = refine(e.root_hz, true);  // again, each harmonic's own bin only
        const double c2 = e.confidence * e.confidence;
        const double score = cand_s_[top[j]] * (1e-3 + c2 * c2);
        if (score > best_score) {
            best_score = score;
            best = e;
        }
    }
    return best;
}

}  // namespace beatless::pitch
