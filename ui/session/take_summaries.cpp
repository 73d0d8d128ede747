#include "ui/session/take_summaries.h"

#include "pitch/base/text.h"
#include "ui/session/safe_file.h"

#include <charconv>
#include <chrono>
#include <cstdio>
#include <vector>

namespace beatless::ui {

namespace {
constexpr std::string_view kHeader = "beatless take summaries 1";

std::vector<std::string_view> split_tabs(std::string_view line) {
    std::vector<std::string_view> out;
    std::size_t at = 0;
    for (std::size_t tab; (tab = line.find('\t', at)) != std::string_view::npos; at = tab + 1)
        out.push_back(line.substr(at, tab - at));
    out.push_back(line.substr(at));
    return out;
}

template <class T>
bool number(std::string_view s, T& out) {
    const auto r = std::from_chars(s.data(), s.data() + s.size(), out);
    return r.ec == std::errc() && r.ptr == s.data() + s.size();
}
}  // namespace

std::optional<TakeStamp> take_stamp(const std::filesystem::path& path, std::string set) {
    std::error_code ec;
    const auto size = std::filesystem::file_size(path, ec);
    if (ec) return std::nullopt;
    const auto mtime = std::filesystem::last_write_time(path, ec);
    if (ec) return std::nullopt;
    TakeStamp s;
    s.size_bytes = size;
    s.mtime_ns =
        std::chrono::duration_cast<std::chrono::nanoseconds>(std::chrono::file_clock::to_sys(mtime).time_since_epoch())
            .count();  // since the Unix epoch
    s.set = std::move(set);
    return s;
}

std::optional<TakeSummary> TakeSummaries::find(const std::string& path, const TakeStamp& stamp) const {
    const auto it = by_path_.find(path);
    if (it == by_path_.end() || !(it->second.stamp == stamp)) return std::nullopt;
    return it->second.summary;
}

void TakeSummaries::put(const std::string& path, const TakeStamp& stamp, const TakeSummary& summary) {
    if (by_path_.size() >= kSummaryCacheMaxTakes && !by_path_.count(path)) return;
    by_path_[path] = Entry{stamp, summary};
}

void TakeSummaries::forget(const std::string& path) { by_path_.erase(path); }

// One line a take: size, modification time (ns), notes, mean deviation ("nan" when none), set, path. Tabs and line
// breaks cannot occur in the set or the path written (such takes are not kept).
std::string TakeSummaries::text() const {
    std::string out(kHeader);
    out += '\n';
    char num[64];
    for (const auto& [path, e] : by_path_) {
        if (path.find_first_of("\t\n\r") != std::string::npos ||
            e.stamp.set.find_first_of("\t\n\r") != std::string::npos)
            continue;
        std::snprintf(num, sizeof num, "%.6f", e.summary.mean_dev_cents);
        out += std::to_string(e.stamp.size_bytes) + '\t' + std::to_string(e.stamp.mtime_ns) + '\t' +
               std::to_string(e.summary.notes) + '\t' + (std::isfinite(e.summary.mean_dev_cents) ? num : "nan") + '\t' +
               e.stamp.set + '\t' + path + '\n';
    }
    return out;
}

std::size_t TakeSummaries::parse(std::string_view text) {
    std::size_t skipped = 0;
    bool first = true;
    for (std::size_t at = 0; at < text.size();) {
        std::size_t end = text.find('\n', at);
        if (end == std::string_view::npos) end = text.size();
        const std::string_view line = text.substr(at, end - at);
        at = end + 1;
        if (first) {
            first = false;
            if (line != kHeader) return 1;  // another format: start afresh
            continue;
        }
        const auto f = split_tabs(line);
        TakeStamp s;
        TakeSummary sum;
        double mean = NAN;
        const bool ok = f.size() == 6 && number(f[0], s.size_bytes) && number(f[1], s.mtime_ns) &&
                        number(f[2], sum.notes) && sum.notes >= 0 && (f[3] == "nan" || number(f[3], mean)) &&
                        !f[4].empty() && !f[5].empty();
        if (!ok || by_path_.size() >= kSummaryCacheMaxTakes) {
            ++skipped;
            continue;
        }
        sum.mean_dev_cents = mean;
        s.set = std::string(f[4]);
        by_path_[std::string(f[5])] = Entry{s, sum};
    }
    return skipped;
}

void TakeSummaries::load(const std::filesystem::path& file) {
    std::error_code ec;
    if (!std::filesystem::exists(file, ec)) return;
    try {
        parse(read_text_file(file.string(), kSummaryCacheLimitBytes, "summary file"));
    } catch (const std::exception&) {
        by_path_.clear();  // unreadable: the takes are analysed again, and the file is rewritten
    }
}

void TakeSummaries::save(const std::filesystem::path& file) const { write_file_safely(file, text()); }

}  // namespace beatless::ui
