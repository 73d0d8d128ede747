#include "ui/session/ensemble_plan.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "ui/session/usage_error.h"

#include <algorithm>
#include <cctype>
#include <initializer_list>

namespace beatless::ui {

namespace {

// Joins parts with append (GCC 12 warns falsely, -Wrestrict, on chains of
// operator+ with literals).
std::string cat(std::initializer_list<std::string_view> parts) {
    std::string s;
    for (std::string_view p : parts) s.append(p);
    return s;
}

std::vector<std::string> split_list(std::string_view text) {
    std::vector<std::string> out;
    if (pitch::trim(text).empty()) return out;
    pitch::for_each_part(text, ',', [&](std::string_view part) { out.emplace_back(pitch::trim(part)); });
    return out;
}

std::vector<int> numbers(std::string_view option, std::string_view text, int lo, int hi, std::string_view what) {
    std::vector<int> out;
    for (const std::string& s : split_list(text)) {
        const bool digits = !s.empty() && s.size() <= 4 && std::all_of(s.begin(), s.end(), [](char c) {
            return std::isdigit(static_cast<unsigned char>(c));
        });
        const int v = digits ? std::stoi(s) : -1;
        if (v < lo || v > hi)
            throw Error(cat({option, " ", pitch::quote(text), ": ", pitch::quote(s), " is not a ", what, " (",
                             std::to_string(lo), " to ", std::to_string(hi), ")"}));
        out.push_back(v);
    }
    return out;
}

// The chord voice a "name=ratio" item names: the voice with that ratio, or
// the one it is an octave of (S=7/2 sings 7/4 an octave up).
std::size_t voice_of_ratio(const ChordFile& chord, std::string_view names_text, std::string_view item,
                           std::string_view ratio_text) {
    pitch::Ratio r;
    try {
        r = pitch::parse_ratio(ratio_text);
    } catch (const Error&) {
        throw Error(cat({"--names ", pitch::quote(names_text), ": ", pitch::quote(item), ": ", pitch::quote(ratio_text),
                         " is not a ratio (as in 7/4)"}));
    }
    const std::size_t nv = chord.chord.size();
    for (std::size_t v = 0; v < nv; ++v)
        if (chord.chord.voice_ratio(v) == r) return v;
    for (std::size_t v = 0; v < nv; ++v)
        if (pitch::octave_reduce(chord.chord.voice_ratio(v)) == pitch::octave_reduce(r)) return v;
    std::string all;
    for (std::size_t v = 0; v < nv; ++v) all.append(v ? ", " : "").append(chord.chord.voice_ratio(v).str());
    throw Error(cat({"--names ", pitch::quote(names_text), ": ", pitch::quote(item), ": ", r.str(),
                     " is not a voice of ", chord.chord.terms_text(), " (", all, ")"}));
}

}  // namespace

std::vector<pitch::Player> plan_players(const ChordFile& chord, const PlanLists& lists) {
    const int voices_in_chord = static_cast<int>(chord.chord.size());
    const std::vector<int> channels = numbers("--channels", lists.channels, 1, 64, "channel number");
    std::vector<int> voices =
        numbers("--voices", lists.voices, 1, voices_in_chord, cat({"voice of ", chord.chord.terms_text()}));
    std::vector<std::string> names = split_list(lists.names);
    // name=ratio items: every item or none, and then no --voices.
    const auto with_ratio = static_cast<std::size_t>(std::count_if(
        names.begin(), names.end(), [](const std::string& s) { return s.find('=') != std::string::npos; }));
    if (with_ratio > 0) {
        if (with_ratio != names.size()) {
            const auto bare = std::find_if(names.begin(), names.end(),
                                           [](const std::string& s) { return s.find('=') == std::string::npos; });
            throw Error(cat({"--names ", pitch::quote(lists.names), ": ", pitch::quote(*bare),
                             " has no =ratio; give every player as name=ratio, or none"}));
        }
        if (!voices.empty())
            throw UsageError("--names with name=ratio and --voices: give each player's voice one way only");
        for (std::string& s : names) {
            const std::size_t eq = s.find('=');
            const std::string name(pitch::trim(std::string_view(s).substr(0, eq)));
            const std::string ratio(pitch::trim(std::string_view(s).substr(eq + 1)));
            if (name.empty())
                throw Error(
                    cat({"--names ", pitch::quote(lists.names), ": ", pitch::quote(s), " has no name before ="}));
            voices.push_back(static_cast<int>(voice_of_ratio(chord, lists.names, s, ratio)) + 1);
            s = name;
        }
    }
    std::size_t n = std::max({channels.size(), voices.size(), names.size()});
    if (n == 0) n = chord.chord.size();
    if (n > pitch::kMaxPlayers)
        throw Error(cat({std::to_string(n), " players: at most ", std::to_string(pitch::kMaxPlayers),
                         channels.size() == n ? " (--channels)"
                         : voices.size() == n ? " (--voices)"
                         : names.size() == n  ? " (--names)"
                                              : " (the chord has more voices; give --voices)"}));
    auto count_problem = [&](std::string_view option, std::size_t have) {
        if (have != 0 && have != n)
            throw Error(cat({option, ": ", std::to_string(have), " given for ", std::to_string(n),
                             " players; give one per player or none"}));
    };
    count_problem("--channels", channels.size());
    count_problem("--voices", voices.size());
    count_problem("--names", names.size());
    // A plain list of names reads as a score does, top voice first (S, A, T, B).
    const bool top_down = voices.empty() && !names.empty();
    if (voices.empty() && static_cast<int>(n) > voices_in_chord)
        throw Error(cat({std::to_string(n), " players for a chord of ", std::to_string(voices_in_chord),
                         " voices: give --voices"}));
    std::vector<pitch::Player> out;
    for (std::size_t i = 0; i < n; ++i) {
        pitch::Player p;
        p.channel = channels.empty() ? static_cast<int>(i) : channels[i] - 1;
        p.voice = !voices.empty() ? static_cast<std::size_t>(voices[i] - 1)
                  : top_down      ? static_cast<std::size_t>(voices_in_chord) - 1 - i
                                  : i;
        if (!names.empty() && !names[i].empty())
            p.name = names[i];
        else if (!chord.voice_names.empty())
            p.name = chord.voice_names[p.voice];
        else
            p.name = cat({"Voice ", std::to_string(p.voice + 1)});
        out.push_back(std::move(p));
    }
    pitch::check_players(chord.chord, out, 64);
    return out;
}

PlanLists lists_of(const std::vector<pitch::Player>& players) {
    PlanLists l;
    for (std::size_t i = 0; i < players.size(); ++i) {
        const std::string_view sep = i ? "," : "";
        l.channels.append(sep).append(std::to_string(players[i].channel + 1));
        l.voices.append(sep).append(std::to_string(players[i].voice + 1));
        std::string name = players[i].name;
        std::replace(name.begin(), name.end(), ',', ' ');
        l.names.append(sep).append(name);
    }
    return l;
}

}  // namespace beatless::ui
