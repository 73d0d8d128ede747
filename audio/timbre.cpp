#include "audio/timbre.h"

#include "audio/synth.h"
#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>

namespace beatless::audio {

std::size_t timbre_partials_into(Timbre t, std::span<double> out) noexcept {
    std::size_t n = 0;
    auto law = [&](std::size_t count, double exponent) {
        n = std::min(count, out.size());
        for (std::size_t k = 0; k < n; ++k) out[k] = std::pow(static_cast<double>(k + 1), -exponent);
    };
    switch (t) {
        case Timbre::pure: law(1, 1.0); break;
        case Timbre::soft: law(6, 2.0); break;
        case Timbre::round: law(12, 1.5); break;
        case Timbre::bright: law(32, 1.0); break;
        case Timbre::hollow:
            law(16, 1.0);
            for (std::size_t k = 1; k < n; k += 2) out[k] *= 0.15;  // even harmonics (k+1 even)
            break;
    }
    double power = 0.0;
    for (std::size_t k = 0; k < n; ++k) power += out[k] * out[k];
    const double scale = power > 0.0 ? 1.0 / std::sqrt(power) : 0.0;  // sum a^2 = 1: RMS of a unit sine
    for (std::size_t k = 0; k < n; ++k) out[k] *= scale;
    return n;
}

int timbre_highest_partial(Timbre t) noexcept {
    double a[kMaxTimbrePartials];
    const std::size_t n = timbre_partials_into(t, a);
    for (std::size_t k = n; k > 0; --k)
        if (a[k - 1] > 0.0) return static_cast<int>(k);
    return 0;
}

std::vector<double> timbre_partials(Timbre t) {
    std::vector<double> a(kMaxTimbrePartials);
    a.resize(timbre_partials_into(t, a));
    return a;
}

const std::vector<Timbre>& all_timbres() {
    static const std::vector<Timbre> all = {Timbre::pure, Timbre::soft, Timbre::round, Timbre::bright, Timbre::hollow};
    return all;
}

std::string_view timbre_name(Timbre t) {
    switch (t) {
        case Timbre::pure: return "pure";
        case Timbre::soft: return "soft";
        case Timbre::round: return "round";
        case Timbre::bright: return "bright";
        case Timbre::hollow: return "hollow";
    }
    return "pure";
}

Timbre parse_timbre(std::string_view name) {
    for (Timbre t : all_timbres())
        if (name == timbre_name(t)) return t;
    std::string known;
    for (Timbre t : all_timbres()) known += (known.empty() ? "" : ", ") + std::string(timbre_name(t));
    throw Error("timbre '" + std::string(name) + "': unknown (choose " + known + ")");
}

}  // namespace beatless::audio
