#include "pitch/theory/chord.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <numbers>
#include <numeric>

namespace beatless::pitch {

namespace {

std::string join_terms(const std::vector<std::int64_t>& terms) {
    std::string s;
    for (std::size_t i = 0; i < terms.size(); ++i) {
        if (i) s += ':';
        s += std::to_string(terms[i]);
    }
    return s;
}

std::vector<double> cents_of(const std::vector<std::int64_t>& terms, std::int64_t root_term) {
    std::vector<double> c;
    c.reserve(terms.size());
    for (const std::int64_t t : terms) c.push_back(Ratio::make(t, root_term).cents());
    return c;
}

void check_count(std::size_t n, std::string_view text) {
    if (n < 2) throw Error(quote(text) + ": a chord needs at least two voices, as in 4:5:6 or '1/1 5/4 3/2'");
    if (n > kMaxChordVoices)
        throw Error(quote(text) + ": " + std::to_string(n) + " voices; a chord has at most " +
                    std::to_string(kMaxChordVoices));
}

void check_size(const std::vector<std::int64_t>& terms, std::int64_t root_term, std::string_view text) {
    for (const std::int64_t t : terms)
        if (t > kMaxChordTerm || root_term > kMaxChordTerm)
            throw Error(quote(text) + ": terms above " + std::to_string(kMaxChordTerm) +
                        " (as harmonics of one fundamental) are too far apart to tune by ear");
}

bool sounds(double freq_hz, double weight) {
    return std::isfinite(freq_hz) && freq_hz > 0.0 && std::isfinite(weight) && weight > 0.0;
}

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Chord and parsing
// ---------------------------------------------------------------------------

Chord Chord::from_terms(std::vector<std::int64_t> terms) {
    const std::string text = join_terms(terms);
    check_count(terms.size(), text);
    for (const std::int64_t t : terms)
        if (t <= 0) throw Error(quote(text) + ": chord terms must be positive");
    for (std::size_t i = 1; i < terms.size(); ++i)
        if (terms[i] <= terms[i - 1])
            throw Error(quote(text) + ": chord terms must rise from the lowest voice, as in 4:5:6 (each voice once)");
    std::int64_t g = 0;
    for (const std::int64_t t : terms) g = std::gcd(g, t);
    for (std::int64_t& t : terms) t /= g;
    check_size(terms, terms.front(), text);
    Chord c;
    c.root_term_ = terms.front();
    c.terms_ = std::move(terms);
    c.cents_ = cents_of(c.terms_, c.root_term_);
    return c;
}

Chord Chord::from_ratios(std::vector<Ratio> voices) {
    std::string text;
    for (const Ratio& r : voices) {
        if (!text.empty()) text += ' ';
        text += r.str();
    }
    check_count(voices.size(), text);
    std::sort(voices.begin(), voices.end(), [](const Ratio& a, const Ratio& b) { return a.cents() < b.cents(); });
    for (std::size_t i = 1; i < voices.size(); ++i)
        if (voices[i] == voices[i - 1]) throw Error(quote(text) + ": " + voices[i].str() + " is given twice");
    // Over the common denominator D every voice is a whole number of D-ths.
    std::int64_t den = 1;
    for (const Ratio& r : voices) den = checked_mul(den / std::gcd(den, r.den), r.den, quote(text));
    std::vector<std::int64_t> terms;
    std::int64_t g = den;
    for (const Ratio& r : voices) {
        terms.push_back(checked_mul(r.num, den / r.den, quote(text)));
        g = std::gcd(g, terms.back());
    }
    for (std::int64_t& t : terms) t /= g;
    check_size(terms, den / g, text);
    Chord c;
    c.root_term_ = den / g;
    c.terms_ = std::move(terms);
    c.cents_ = cents_of(c.terms_, c.root_term_);
    return c;
}

Ratio Chord::voice_ratio(std::size_t i) const { return Ratio::make(terms_.at(i), root_term_); }

std::string Chord::terms_text() const { return join_terms(terms_); }

Chord parse_chord(std::string_view text) {
    // Spaces around ':' belong to the term form ("4 : 5 : 6").
    std::string norm;
    for (const char c : trim(text)) {
        if (c == ':') {
            while (!norm.empty() && norm.back() == ' ') norm.pop_back();
            norm += c;
        } else if ((c == ' ' || c == '\t') && !norm.empty() && norm.back() == ':') {
            continue;
        } else {
            norm += c;
        }
    }
    if (norm.empty()) throw Error("'': empty chord (expected a form such as 4:5:6 or '1/1 5/4 3/2')");
    std::vector<std::string_view> tokens;
    std::size_t start = 0;
    const std::string_view n = norm;
    while (start < n.size()) {
        const auto end = n.find_first_of(" \t,", start);
        const auto tok = n.substr(start, end == std::string_view::npos ? n.npos : end - start);
        if (!tok.empty()) tokens.push_back(tok);
        if (end == std::string_view::npos) break;
        start = end + 1;
    }
    if (tokens.size() == 1 && tokens[0].find('/') == std::string_view::npos) {
        return Chord::from_terms(parse_chord_terms(tokens[0]));  // messages name the terms
    }
    std::vector<Ratio> voices;
    for (const auto tok : tokens) voices.push_back(parse_ratio(tok));
    return Chord::from_ratios(std::move(voices));
}

// ---------------------------------------------------------------------------
// [SECTION] Chart
// ---------------------------------------------------------------------------

double beat_hz_per_cent(const PartialPair& pair) { return pair.freq_b_hz * std::numbers::ln2 / 1200.0; }

ChordChart chord_chart(const Chord& chord, double root_hz, const ChartConfig& config) {
    ChordChart chart;
    chart.root_hz = root_hz;
    chart.fundamental_hz = root_hz / static_cast<double>(chord.root_term());
    for (std::size_t i = 0; i < chord.size(); ++i) {
        VoiceChart v;
        v.ratio = chord.voice_ratio(i);
        v.term = chord.terms()[i];
        v.freq_hz = chart.fundamental_hz * static_cast<double>(v.term);
        v.cents_from_root = chord.voice_cents(i);
        v.note = hz_to_note(v.freq_hz, config.a4_hz);
        chart.voices.push_back(std::move(v));
    }
    for (std::size_t a = 0; a < chord.size(); ++a) {
        for (std::size_t b = a + 1; b < chord.size(); ++b) {
            VoiceBeat vb;
            vb.voice_a = a;
            vb.voice_b = b;
            const double fa = chart.voices[a].freq_hz;
            const double fb = chart.voices[b].freq_hz;
            vb.interval = Ratio::make(chord.terms()[b], chord.terms()[a]);
            vb.lowest = coinciding_pair(fa, fb, vb.interval);
            vb.beat_hz_per_cent = beat_hz_per_cent(vb.lowest);
            vb.heard = audible_pair(fa, fb, vb.interval.cents(), vb.interval, config.audible);
            if (vb.heard.found) vb.heard_hz_per_cent = vb.heard.partial_b * fb * std::numbers::ln2 / 1200.0;
            // At the just tuning the meeting partials agree to rounding error;
            // every other pair is at least the common fundamental apart.
            const double within_hz = 1e-9 * fb * config.max_harmonic;
            vb.coinciding = near_pairs(fa, fb, config.max_harmonic, within_hz);
            chart.beats.push_back(std::move(vb));
        }
    }
    return chart;
}

// ---------------------------------------------------------------------------
// [SECTION] Reference roots and deviations
// ---------------------------------------------------------------------------

double reference_root_hz(const Chord& chord, ChordReference ref, double fixed_root_hz, std::span<const double> freq_hz,
                         std::span<const double> weight) noexcept {
    assert(freq_hz.size() == chord.size() && "reference_root_hz: one frequency per voice");
    assert((weight.empty() || weight.size() == chord.size()) && "reference_root_hz: one weight per voice");
    const auto w = [&](std::size_t i) { return weight.empty() ? 1.0 : weight[i]; };
    switch (ref) {
        case ChordReference::fixed_root: return fixed_root_hz;
        case ChordReference::sounding_bass:
            for (std::size_t i = 0; i < chord.size(); ++i)
                if (sounds(freq_hz[i], w(i))) return freq_hz[i] * std::exp2(-chord.voice_cents(i) / 1200.0);
            return NAN;
        case ChordReference::best_fit: {
            // Cents against R0 keep the sums small; any R0 > 0 gives the same R*.
            const double r0 = (std::isfinite(fixed_root_hz) && fixed_root_hz > 0.0) ? fixed_root_hz : 1.0;
            double sum_w = 0.0;
            double sum_wx = 0.0;
            for (std::size_t i = 0; i < chord.size(); ++i) {
                if (!sounds(freq_hz[i], w(i))) continue;
                const double m = 1200.0 * std::log2(freq_hz[i] / r0);
                sum_w += w(i);
                sum_wx += w(i) * (m - chord.voice_cents(i));
            }
            if (!(sum_w > 0.0)) return NAN;
            return r0 * std::exp2(sum_wx / sum_w / 1200.0);
        }
    }
    return NAN;
}

void voice_deviations(const Chord& chord, double root_hz, std::span<const double> freq_hz,
                      std::span<double> dev_cents) noexcept {
    assert(freq_hz.size() == chord.size() && dev_cents.size() == chord.size() &&
           "voice_deviations: one frequency and one output per voice");
    const bool root_ok = std::isfinite(root_hz) && root_hz > 0.0;
    for (std::size_t i = 0; i < chord.size(); ++i) {
        const double f = freq_hz[i];
        dev_cents[i] =
            (root_ok && std::isfinite(f) && f > 0.0) ? 1200.0 * std::log2(f / root_hz) - chord.voice_cents(i) : NAN;
    }
}

}  // namespace beatless::pitch
