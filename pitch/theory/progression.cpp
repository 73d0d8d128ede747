#include "pitch/theory/progression.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"

#include <algorithm>
#include <cctype>
#include <cmath>

namespace beatless::pitch {

namespace {

// ---------------------------------------------------------------------------
// [SECTION] Tables (see the header for the same tables with the notes in C)
// ---------------------------------------------------------------------------

enum class Mark { none, dim, halfdim };

struct DegreeChord {
    int degree;            // 1..7
    bool upper;            // written in upper case
    Mark triad_mark;       // what the triad is written with
    Mark seventh_mark;     // what the seventh chord is written with
    Ratio root;            // above the tonic
    const char* triad;     // terms
    const char* seventh;   // terms
    const char* written;   // the triad as written, for messages
    const char* written7;  // the seventh chord as written
};

const std::vector<DegreeChord>& table(KeyMode mode) {
    static const std::vector<DegreeChord> major = {
        {1, true, Mark::none, Mark::none, {1, 1}, "4:5:6", "8:10:12:15", "I", "I7"},
        {2, false, Mark::none, Mark::none, {10, 9}, "10:12:15", "10:12:15:18", "ii", "ii7"},
        {3, false, Mark::none, Mark::none, {5, 4}, "10:12:15", "10:12:15:18", "iii", "iii7"},
        {4, true, Mark::none, Mark::none, {4, 3}, "4:5:6", "8:10:12:15", "IV", "IV7"},
        {5, true, Mark::none, Mark::none, {3, 2}, "4:5:6", "36:45:54:64", "V", "V7"},
        {6, false, Mark::none, Mark::none, {5, 3}, "10:12:15", "10:12:15:18", "vi", "vi7"},
        {7, false, Mark::dim, Mark::halfdim, {15, 8}, "45:54:64", "45:54:64:80", "vii°", "viiø7"},
    };
    static const std::vector<DegreeChord> minor = {
        {1, false, Mark::none, Mark::none, {1, 1}, "10:12:15", "10:12:15:18", "i", "i7"},
        {2, false, Mark::dim, Mark::halfdim, {10, 9}, "25:30:36", "25:30:36:45", "ii°", "iiø7"},
        {3, true, Mark::none, Mark::none, {6, 5}, "4:5:6", "8:10:12:15", "III", "III7"},
        {4, false, Mark::none, Mark::none, {4, 3}, "10:12:15", "10:12:15:18", "iv", "iv7"},
        {5, false, Mark::none, Mark::none, {3, 2}, "10:12:15", "10:12:15:18", "v", "v7"},
        {5, true, Mark::none, Mark::none, {3, 2}, "4:5:6", "36:45:54:64", "V", "V7"},
        {6, true, Mark::none, Mark::none, {8, 5}, "4:5:6", "8:10:12:15", "VI", "VI7"},
        {7, true, Mark::none, Mark::none, {9, 5}, "4:5:6", "36:45:54:64", "VII", "VII7"},
        {7, false, Mark::dim, Mark::dim, {15, 8}, "45:54:64", "225:270:320:384", "vii°", "vii°7"},
    };
    return mode == KeyMode::major ? major : minor;
}

const DegreeChord* find_entry(KeyMode mode, int degree, bool upper) {
    for (const auto& e : table(mode))
        if (e.degree == degree && e.upper == upper) return &e;
    return nullptr;
}

std::string chord_list(KeyMode mode) {
    std::string s;
    for (const auto& e : table(mode)) {
        if (!s.empty()) s += ' ';
        s += e.written;
    }
    return s;
}

int mod12(long v) { return static_cast<int>(((v % 12) + 12) % 12); }

// ---------------------------------------------------------------------------
// [SECTION] Numerals
// ---------------------------------------------------------------------------

struct Numeral {
    std::string token;
    int degree = 0;
    bool upper = false;
    Mark mark = Mark::none;
    bool seventh = false;
};

Numeral parse_numeral_token(std::string_view tok) {
    Numeral n;
    n.token = std::string(tok);
    const std::string q = quote(tok);
    if (!tok.empty() && (tok[0] == 'b' || tok[0] == '#'))
        throw Error(
            q + ": chromatic numerals are not supported; write the chord as ROOT:TERMS, e.g. 16/9:4:5:6 for bVII in C");
    std::size_t i = 0;
    std::string roman;
    while (i < tok.size() && std::string_view("IViv").find(tok[i]) != std::string_view::npos) roman += tok[i++];
    if (roman.empty())
        throw Error(
            q +
            ": not a Roman numeral or a chord (expected I to VII, e.g. V7 or vi, or ROOT:TERMS such as 5/3:10:12:15)");
    const bool all_upper = std::all_of(roman.begin(), roman.end(), [](char c) { return c == 'I' || c == 'V'; });
    const bool all_lower = std::all_of(roman.begin(), roman.end(), [](char c) { return c == 'i' || c == 'v'; });
    if (!all_upper && !all_lower)
        throw Error(q + ": mixes upper and lower case (upper case for a major chord, lower for minor or diminished)");
    std::string up = roman;
    for (char& c : up) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    static const char* const degrees[] = {"I", "II", "III", "IV", "V", "VI", "VII"};
    for (int d = 0; d < 7; ++d)
        if (up == degrees[d]) n.degree = d + 1;
    if (n.degree == 0) throw Error(q + ": not a scale degree (I to VII)");
    n.upper = all_upper;
    std::string_view rest = tok.substr(i);
    if (rest.starts_with("\xC2\xB0")) {  // U+00B0 degree sign
        n.mark = Mark::dim;
        rest.remove_prefix(2);
    } else if (rest.starts_with("\xC3\xB8")) {  // U+00F8 o with stroke
        n.mark = Mark::halfdim;
        rest.remove_prefix(2);
    } else if (rest.starts_with("/o")) {
        n.mark = Mark::halfdim;
        rest.remove_prefix(2);
    } else if (rest.starts_with("o")) {
        n.mark = Mark::dim;
        rest.remove_prefix(1);
    }
    if (rest == "7") {
        n.seventh = true;
    } else if (!rest.empty()) {
        if (rest.front() == '/')
            throw Error(
                q + ": secondary chords such as V/V are not supported; write the chord as ROOT:TERMS, e.g. 9/8:4:5:6");
        throw Error(q + ": unknown chord suffix " + quote(rest) +
                    " (a Roman numeral takes ° or o for diminished, ø or /o for half-diminished, and 7)");
    }
    return n;
}

ProgressionChord numeral_chord(const Numeral& n, KeyMode mode) {
    const DegreeChord* e = find_entry(mode, n.degree, n.upper);
    if (!e) {
        std::string hint;
        const KeyMode other = mode == KeyMode::major ? KeyMode::minor : KeyMode::major;
        if (const DegreeChord* o = find_entry(other, n.degree, n.upper))
            hint = ", or write it as " + o->root.str() + ":" + (n.seventh ? o->seventh : o->triad);
        throw Error(quote(n.token) + ": not a chord of a " + mode_name(mode) + " key (its chords are " +
                    chord_list(mode) + hint + ")");
    }
    const Mark want = n.seventh ? e->seventh_mark : e->triad_mark;
    if (n.mark != want)
        throw Error(quote(n.token) + ": in a " + std::string(mode_name(mode)) + " key this chord is written " +
                    (n.seventh ? e->written7 : e->written));
    ProgressionChord pc;
    pc.symbol = n.token;
    pc.root = e->root;
    pc.chord = Chord::from_terms(parse_chord_terms(n.seventh ? e->seventh : e->triad));
    return pc;
}

ProgressionChord explicit_chord(std::string_view tok) {
    const auto colon = tok.find(':');
    const std::string_view root_text = tok.substr(0, colon);
    if (root_text.find('/') == std::string_view::npos)
        throw Error(quote(tok) + ": an explicit chord needs its root ratio first, as in 1/1:4:5:6 or 5/3:10:12:15");
    ProgressionChord pc;
    pc.symbol = std::string(tok);
    try {
        pc.root = parse_ratio(root_text);
        pc.chord = Chord::from_terms(parse_chord_terms(tok.substr(colon + 1)));
    } catch (const Error& e) {
        // "'4:0:6': problem" -> "'1/1:4:0:6': problem", naming what the user wrote.
        const std::string m = e.what();
        const auto at = m.find("': ");
        throw Error(quote(tok) + (at == std::string::npos ? ": " + m : m.substr(at + 1)));
    }
    return pc;
}

std::vector<std::string_view> split_tokens(std::string_view text) {
    std::vector<std::string_view> out;
    std::size_t i = 0;
    const auto is_sep = [&](std::size_t k) -> std::size_t {  // length of a separator at k, or 0
        const char c = text[k];
        if (c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == ',' || c == '-' || c == '|') return 1;
        // U+2013 en dash, U+2014 em dash, U+2192 arrow
        const std::string_view t = text.substr(k, 3);
        if (t == "\xE2\x80\x93" || t == "\xE2\x80\x94" || t == "\xE2\x86\x92") return 3;
        return 0;
    };
    std::size_t start = 0;
    while (i < text.size()) {
        if (const std::size_t len = is_sep(i)) {
            if (i > start) out.push_back(text.substr(start, i - start));
            i += len;
            start = i;
        } else {
            ++i;
        }
    }
    if (i > start) out.push_back(text.substr(start, i - start));
    return out;
}

// ---------------------------------------------------------------------------
// [SECTION] Exact arithmetic that gives up quietly on overflow (cents stay exact enough)
// ---------------------------------------------------------------------------

std::optional<Ratio> times(const std::optional<Ratio>& a, const Ratio& b) {
    if (!a) return std::nullopt;
    try {
        return *a * b;
    } catch (const Error&) {
        return std::nullopt;
    }
}

std::optional<Ratio> octaves(std::optional<Ratio> r, long n) {
    const Ratio two{2, 1};
    for (long k = 0; k < n && r; ++k) r = times(r, two);
    for (long k = 0; k > n && r; --k) r = times(r, invert(two));
    return r;
}

constexpr double kSameCents = 1e-6;

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Keys
// ---------------------------------------------------------------------------

const char* mode_name(KeyMode mode) { return mode == KeyMode::major ? "major" : "minor"; }

const char* rule_name(DriftRule rule) { return rule == DriftRule::fixed_root ? "fixed-root" : "common-tones"; }

Key parse_key(std::string_view text, double a4_hz) {
    const std::string_view t = trim(text);
    std::string lower(t);
    for (char& c : lower) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    Key key;
    std::size_t cut = t.size();
    for (const auto& [word, mode] : {std::pair{"minor", KeyMode::minor},
                                     {"major", KeyMode::major},
                                     {"min", KeyMode::minor},
                                     {"maj", KeyMode::major},
                                     {"m", KeyMode::minor}}) {
        const std::string_view w = word;
        if (lower.size() > w.size() && std::string_view(lower).ends_with(w)) {
            key.mode = mode;
            cut = t.size() - w.size();
            break;
        }
    }
    const std::string_view note = trim(t.substr(0, cut));
    try {
        key.tonic = parse_tonic(note);
        const bool has_octave = !note.empty() && std::isdigit(static_cast<unsigned char>(note.back()));
        key.tonic_hz = note_to_hz(has_octave ? std::string(note) : std::string(note) + "4", a4_hz);
    } catch (const Error&) {
        throw Error(quote(text) + ": not a key (expected a form such as C, Eb3, A minor or F#m)");
    }
    return key;
}

// ---------------------------------------------------------------------------
// [SECTION] Parsing
// ---------------------------------------------------------------------------

Progression parse_progression(std::string_view text, std::optional<KeyMode> mode) {
    const auto tokens = split_tokens(text);
    if (tokens.empty())
        throw Error(
            quote(text) +
            ": empty progression (write Roman numerals such as \"I vi ii V I\" or chords such as 5/3:10:12:15)");
    if (tokens.size() > kMaxProgressionChords)
        throw Error("progression of " + std::to_string(tokens.size()) + " chords: at most " +
                    std::to_string(kMaxProgressionChords));
    struct Slot {
        std::optional<Numeral> numeral;
        std::string_view token;
    };
    std::vector<Slot> slots;
    for (const auto tok : tokens) {
        Slot s{std::nullopt, tok};
        if (tok.find(':') == std::string_view::npos) s.numeral = parse_numeral_token(tok);
        slots.push_back(s);
    }
    Progression p;
    if (mode) {
        p.mode = *mode;
    } else {
        const Numeral* only_major = nullptr;
        const Numeral* only_minor = nullptr;
        for (const auto& s : slots) {
            if (!s.numeral) continue;
            const bool in_major = find_entry(KeyMode::major, s.numeral->degree, s.numeral->upper) != nullptr;
            const bool in_minor = find_entry(KeyMode::minor, s.numeral->degree, s.numeral->upper) != nullptr;
            if (in_major && !in_minor && !only_major) only_major = &*s.numeral;
            if (in_minor && !in_major && !only_minor) only_minor = &*s.numeral;
        }
        if (only_major && only_minor)
            throw Error(quote(text) + ": mixes numerals of a major key (" + only_major->token + ") and a minor key (" +
                        only_minor->token +
                        "); name the key with --key, e.g. --key \"C minor\", or write the odd chord as ROOT:TERMS");
        p.mode = only_minor ? KeyMode::minor : KeyMode::major;
    }
    for (const auto& s : slots)
        p.chords.push_back(s.numeral ? numeral_chord(*s.numeral, p.mode) : explicit_chord(s.token));
    return p;
}

// ---------------------------------------------------------------------------
// [SECTION] Tuning and drift
// ---------------------------------------------------------------------------

ProgressionTuning tune_progression(const Progression& p, DriftRule rule) {
    ProgressionTuning out;
    out.rule = rule;
    struct Fixed {
        std::vector<Ratio> ratio;
        std::vector<double> cents;
        std::vector<long> step;
        std::vector<int> pc;
    };
    std::vector<Fixed> fixed;
    for (const auto& pc : p.chords) {
        Fixed f;
        for (std::size_t j = 0; j < pc.chord.size(); ++j) {
            f.ratio.push_back(pc.root * pc.chord.voice_ratio(j));
            f.cents.push_back(pc.root.cents() + pc.chord.voice_cents(j));
            f.step.push_back(std::lround(f.cents.back() / 100.0));
            f.pc.push_back(mod12(f.step.back()));
        }
        fixed.push_back(std::move(f));
    }

    double shift_cents = 0.0;
    std::optional<Ratio> shift = Ratio{1, 1};
    for (std::size_t k = 0; k < p.chords.size(); ++k) {
        TunedChord tc;
        const double prev_shift_cents = shift_cents;
        const std::optional<Ratio> prev_shift = shift;
        if (k > 0 && rule == DriftRule::common_tones) {
            struct Candidate {
                double cents;
                std::optional<Ratio> ratio;
                int votes;
            };
            std::vector<Candidate> cands;
            const Fixed& a = fixed[k - 1];
            const Fixed& b = fixed[k];
            for (std::size_t j = 0; j < b.cents.size(); ++j) {
                for (std::size_t i = 0; i < a.cents.size(); ++i) {
                    if (a.pc[i] != b.pc[j]) continue;
                    const long n = std::lround((a.cents[i] - b.cents[j]) / 1200.0);
                    const double c = prev_shift_cents + a.cents[i] - b.cents[j] - 1200.0 * static_cast<double>(n);
                    auto it = std::find_if(cands.begin(), cands.end(),
                                           [&](const Candidate& x) { return std::fabs(x.cents - c) < kSameCents; });
                    if (it != cands.end()) {
                        ++it->votes;
                        continue;
                    }
                    const auto exact = octaves(times(times(prev_shift, a.ratio[i]), invert(b.ratio[j])), -n);
                    cands.push_back({exact ? exact->cents() : c, exact, 1});
                }
            }
            const Candidate* best = nullptr;
            for (const auto& c : cands) {
                if (!best || c.votes > best->votes ||
                    (c.votes == best->votes &&
                     std::fabs(c.cents - prev_shift_cents) < std::fabs(best->cents - prev_shift_cents) - kSameCents))
                    best = &c;
            }
            if (best) {
                shift_cents = best->cents;
                shift = best->ratio;
            }
        }
        tc.shift_cents = shift_cents;
        tc.shift = shift;
        tc.step_cents = k == 0 ? 0.0 : shift_cents - prev_shift_cents;
        if (std::fabs(tc.step_cents) < kSameCents) tc.step_cents = 0.0;
        for (std::size_t j = 0; j < fixed[k].cents.size(); ++j) {
            TunedVoice v;
            v.cents = shift_cents + fixed[k].cents[j];
            v.ratio = times(shift, fixed[k].ratio[j]);
            v.step = static_cast<int>(fixed[k].step[j]);
            v.pitch_class = fixed[k].pc[j];
            v.et_offset_cents = v.cents - 100.0 * v.step;
            tc.voices.push_back(v);
        }
        if (k > 0) {
            const Fixed& a = fixed[k - 1];
            for (std::size_t j = 0; j < fixed[k].cents.size(); ++j) {
                for (std::size_t i = 0; i < a.cents.size(); ++i) {
                    if (a.pc[i] != fixed[k].pc[j]) continue;
                    double m = (shift_cents + fixed[k].cents[j]) - (prev_shift_cents + a.cents[i]);
                    m -= 1200.0 * std::round(m / 1200.0);
                    const bool held = std::fabs(m) < kSameCents;
                    tc.common.push_back({i, j, fixed[k].pc[j], held ? 0.0 : m, held});
                }
            }
            if (tc.step_cents != 0.0) out.causes.push_back(k);
        }
        out.chords.push_back(std::move(tc));
    }
    out.drift_cents = shift_cents;
    out.drift = shift;
    return out;
}

}  // namespace beatless::pitch
