#include "audio/timbre.h"

#include "audio/synth.h"
#include "pitch/error.h"

#include <cmath>

namespace beatless::audio {

namespace {

std::vector<double> normalised(std::vector<double> a) {
    double power = 0.0;
    for (double v : a) power += v * v;
    const double scale = power > 0.0 ? 1.0 / std::sqrt(power) : 0.0;  // sum a^2 = 1: RMS of a unit sine
    for (double& v : a) v *= scale;
    return a;
}

}  // namespace

std::vector<double> timbre_partials(Timbre t) {
    switch (t) {
        case Timbre::pure: return {1.0};
        case Timbre::soft: return normalised(partials_power_law(6, 2.0));
        case Timbre::round: return normalised(partials_power_law(12, 1.5));
        case Timbre::bright: return normalised(partials_power_law(32, 1.0));
        case Timbre::hollow: {
            std::vector<double> a = partials_power_law(16, 1.0);
            for (std::size_t k = 1; k < a.size(); k += 2) a[k] *= 0.15;  // even harmonics (k+1 even)
            return normalised(a);
        }
    }
    return {1.0};
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
