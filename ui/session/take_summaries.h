// Take summaries — what the Review screen's list shows of each take (its notes and their mean deviation), kept by
// file so a restart does not analyse again: a take's summary stands while its sound file keeps its size and its
// modification time and the set it was judged against is the same. Saved as a small text file in the takes folder
// (".review-cache", one line a take, tab-separated; format in DEVELOPERS.md, "Takes"), read size-capped and checked
// line by line (a line that does not read is dropped: the take is analysed again).
// Thread: one at a time (ReviewWorker guards it). Allocates: yes.
#pragma once

#include <cmath>
#include <cstdint>
#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <string_view>

namespace beatless::ui {

inline constexpr std::size_t kSummaryCacheLimitBytes = 4u << 20;  // the cache file read at most (4 MB)
inline constexpr std::size_t kSummaryCacheMaxTakes = 20000;       // lines kept

struct TakeSummary {
    int notes = 0;                // held notes found
    double mean_dev_cents = NAN;  // mean deviation of the judged ones (NaN when none)
};

// What a summary is good for: the file as it was, judged against this set.
struct TakeStamp {
    std::uintmax_t size_bytes = 0;
    std::int64_t mtime_ns = 0;
    std::string set;  // the set judged against (the sidecar's, or the default)
    bool operator==(const TakeStamp&) const = default;
};
// The stamp of the file at `path` now; nullopt when it cannot be read.
std::optional<TakeStamp> take_stamp(const std::filesystem::path& path, std::string set);

class TakeSummaries {
public:
    // The summary of `path` if it was made for this very stamp.
    std::optional<TakeSummary> find(const std::string& path, const TakeStamp& stamp) const;
    void put(const std::string& path, const TakeStamp& stamp, const TakeSummary& summary);
    void forget(const std::string& path);
    std::size_t size() const { return by_path_.size(); }

    std::string text() const;  // the file's text
    // Reads a cache's text; lines that do not read are skipped (returns how many).
    std::size_t parse(std::string_view text);
    // The file: missing is empty; a file that cannot be read (too large, not a file) is ignored (empty).
    void load(const std::filesystem::path& file);
    void save(const std::filesystem::path& file) const;  // through safe_file.h; throws Error naming it

private:
    struct Entry {
        TakeStamp stamp;
        TakeSummary summary;
    };
    std::map<std::string, Entry> by_path_;
};

}  // namespace beatless::ui
