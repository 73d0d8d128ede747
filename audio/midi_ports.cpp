#include "audio/midi_ports.h"

#include "pitch/base/error.h"

namespace beatless::audio::detail {

namespace {

void ignore_errors(RtMidiError::Type, const std::string&, void*) {}

template <class T>
std::unique_ptr<T> make_client(RtMidi::Api api) {
    try {
        QuietStderr quiet;
        auto c = std::make_unique<T>(api, "beatless");
        c->setErrorCallback(&ignore_errors, nullptr);
        // JACK's client reports "server not running" as a warning, not a throw.
        if (api == RtMidi::UNIX_JACK) {
            const unsigned n = c->getPortCount();
            (void)n;
        }
        return c;
    } catch (const RtMidiError&) {
        return nullptr;
    }
}

}  // namespace

std::vector<RtMidi::Api> midi_apis() {
    std::vector<RtMidi::Api> compiled;
    RtMidi::getCompiledApi(compiled);
    std::vector<RtMidi::Api> out;
    for (RtMidi::Api a : {RtMidi::LINUX_ALSA, RtMidi::UNIX_JACK})
        for (RtMidi::Api c : compiled)
            if (a == c) out.push_back(a);
    return out;
}

std::unique_ptr<RtMidiOut> make_midi_out(RtMidi::Api api) { return make_client<RtMidiOut>(api); }
std::unique_ptr<RtMidiIn> make_midi_in(RtMidi::Api api) { return make_client<RtMidiIn>(api); }

const char* api_name(RtMidi::Api api) {
    return api == RtMidi::UNIX_JACK ? "jack" : api == RtMidi::LINUX_ALSA ? "alsa" : "midi";
}

PortChoice choose_midi_port(const std::string& wanted, bool input) {
    std::vector<PortChoice> all;
    QuietStderr quiet;
    auto add = [&](RtMidi::Api api, RtMidi* c) {
        const unsigned n = c->getPortCount();
        for (unsigned i = 0; i < n; ++i) {
            const std::string name = c->getPortName(i);
            if (!name.empty()) all.push_back({api, i, name});
        }
    };
    for (RtMidi::Api api : midi_apis()) {
        if (input) {
            if (auto c = make_midi_in(api)) add(api, c.get());
        } else if (auto c = make_midi_out(api)) {
            add(api, c.get());
        }
    }
    std::string known;
    for (const auto& p : all) known += (known.empty() ? "" : ", ") + p.name;
    const std::string what = std::string("MIDI ") + (input ? "input" : "output") + " port '" + wanted + "'";
    if (all.empty())
        throw Error(what + ": not found: no MIDI ports at all (is an ALSA sequencer or a JACK server running?)");
    // A number: its place in the listing (1-based, as `beatless devices` prints).
    if (!wanted.empty() && wanted.find_first_not_of("0123456789") == std::string::npos) {
        const unsigned long k = std::stoul(wanted);
        if (k >= 1 && k <= all.size()) return all[k - 1];
        throw Error(what + ": no port of that number (ports: " + known + ")");
    }
    for (const auto& p : all)
        if (p.name == wanted) return p;
    std::vector<PortChoice> hits;
    for (const auto& p : all)
        if (!wanted.empty() && p.name.find(wanted) != std::string::npos) hits.push_back(p);
    if (hits.size() == 1) return hits[0];
    if (hits.empty()) throw Error(what + ": not found (ports: " + known + ")");
    std::string names;
    for (const auto& p : hits) names += (names.empty() ? "" : ", ") + p.name;
    throw Error(what + ": matches " + std::to_string(hits.size()) + " ports (" + names + "); give more of the name");
}

}  // namespace beatless::audio::detail
