// Practice log: paths, schema and migration, round trips, crash safety,
// full and read-only disks, CSV export/import and the history command.
//
// Sources: the folder rules are the XDG Base Directory Specification 0.8
// (freedesktop.org); crash safety is SQLite's atomic commit in WAL mode
// (sqlite.org/atomiccommit.html, sqlite.org/wal.html), checked with SQLite's
// own PRAGMA integrity_check; week starts are ISO 8601 Mondays, checked with
// Python's datetime (date - timedelta(days=date.weekday())); the trace
// records in tests/data/practice_v1.sql were made with Python's struct.pack.
//
// Index
//   1. Helpers (temporary folders, random attempts, running the program)
//   2. Paths
//   3. Schema, round trips, migration
//   4. Crash safety (SIGKILL during writes)
//   5. Full, read-only and missing disks
//   6. CSV export and import
//   7. The history command
#include "pitch/base/error.h"
#include "ui/session/drill_progress.h"
#include "ui/session/log_csv.h"
#include "ui/session/log_summary.h"
#include "ui/session/log_writer.h"
#include "ui/session/paths.h"
#include "ui/session/practice_log.h"
#include "ui/session/rng.h"

#include <doctest/doctest.h>
#include <sqlite3.h>

#include <sys/wait.h>
#include <unistd.h>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <sstream>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::ui;
namespace fs = std::filesystem;

// ---- 1. Helpers ------------------------------------------------------------

namespace {

struct TempDir {
    fs::path path;
    explicit TempDir(const std::string& tag) {
        static int n = 0;
        path = fs::temp_directory_path() /
               ("beatless-log-" + tag + "-" + std::to_string(::getpid()) + "-" + std::to_string(n++));
        fs::remove_all(path);
        fs::create_directories(path / "data");  // a log path the user names must be in a folder that exists
    }
    ~TempDir() {
        std::error_code ec;
        fs::remove_all(path, ec);
    }
};

std::string read_file(const fs::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

void write_file(const fs::path& p, const std::string& text) { std::ofstream(p, std::ios::binary) << text; }

// A random but valid attempt; the trace has `records` readings at a 5 ms hop.
Attempt random_attempt(ui::Rng& rng, int index, std::size_t records) {
    static const char* kTargets[] = {"7/5", "10/7", "11/8", "45/32", "600c", "3/2"};
    Attempt a;
    a.uid = new_uid();
    char when[64];
    std::snprintf(when, sizeof when, "2025-%02d-%02dT%02d:%02d:%02d.%03dZ", 1 + index % 12, 1 + index % 28, index % 24,
                  index % 60, (index * 7) % 60, index % 1000);
    a.started_at = when;
    a.kind = index % 5 == 4 ? AttemptKind::ear : AttemptKind::hold;
    a.drill = a.kind == AttemptKind::ear ? "ear-tritones" : "hold-tritones";
    a.target = a.kind == AttemptKind::ear ? "11/8 7/5 45/32 600c 10/7" : kTargets[rng.below(6)];
    a.target_name = index % 3 == 0 ? "name, with \"quotes\"\nand a line break" : "";
    a.root_hz = 55.0 + 500.0 * rng.uniform();
    a.performer = index % 2 ? "Ana" : "";
    a.settings_json = "{\"hold_s\": " + std::to_string(index % 7) + ", \"note\": \"a,b\"}";
    a.dur_s = 4.0 + rng.uniform();
    if (a.kind == AttemptKind::hold) {
        if (index % 4 != 3) {
            a.locked = true;
            a.time_to_lock_s = rng.uniform() * 2.0;
        } else {
            a.locked = false;
        }
        a.mean_dev_cents = -20.0 + 40.0 * rng.uniform();
        a.spread_cents = 10.0 * rng.uniform();
        a.in_tolerance_share = rng.uniform();
    } else {
        a.threshold_cents = 5.0 + 30.0 * rng.uniform();
        a.trials = 30 + static_cast<int>(rng.below(60));
        a.correct_share = rng.uniform();
        a.method = "discriminate 2-down 1-up";
        a.estimate = "measured";
        a.threshold_lo_cents = a.threshold_cents * (0.5 + 0.4 * rng.uniform());
        a.threshold_hi_cents = a.threshold_cents * (1.1 + rng.uniform());
    }
    for (std::size_t i = 0; i < records; ++i) {
        const bool voiced = rng.below(10) != 0;
        a.trace.push_back({0.005f * static_cast<float>(i), voiced ? static_cast<float>(a.root_hz * 1.4) : 0.0f,
                           voiced ? static_cast<float>(rng.uniform() * 30.0 - 15.0) : NAN,
                           voiced ? static_cast<float>(rng.uniform() * 4.0 - 2.0) : NAN});
    }
    return a;
}

// Opens read-only by default; the crash test opens read-write, as the next
// run of the program would, so SQLite can recover the write-ahead log that
// the killed writer left behind (a read-only connection cannot).
std::string sql_text(const fs::path& db, const char* sql, int flags = SQLITE_OPEN_READONLY) {
    sqlite3* h = nullptr;
    std::string out;
    if (sqlite3_open_v2(db.c_str(), &h, flags, nullptr) == SQLITE_OK) {
        sqlite3_stmt* s = nullptr;
        if (sqlite3_prepare_v2(h, sql, -1, &s, nullptr) == SQLITE_OK && sqlite3_step(s) == SQLITE_ROW) {
            const auto* t = sqlite3_column_text(s, 0);
            if (t) out = reinterpret_cast<const char*>(t);
        }
        sqlite3_finalize(s);
    }
    sqlite3_close(h);
    return out;
}

struct Run {
    int code = -1;
    std::string out, err;
};

// Runs the beatless program with BEATLESS_HOME set to home.
Run run_program(const std::string& args, const fs::path& home) {
    const fs::path err_file = home / "stderr.txt";
    const std::string cmd =
        "BEATLESS_HOME='" + home.string() + "' '" BEATLESS_PROGRAM "' " + args + " 2>'" + err_file.string() + "'";
    Run r;
    FILE* p = popen(cmd.c_str(), "r");
    REQUIRE(p != nullptr);
    char buf[4096];
    std::size_t n;
    while ((n = std::fread(buf, 1, sizeof buf, p)) > 0) r.out.append(buf, n);
    const int status = pclose(p);
    r.code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    r.err = read_file(err_file);
    return r;
}

}  // namespace

// ---- 2. Paths --------------------------------------------------------------

TEST_CASE("folders follow XDG, fall back to HOME, and BEATLESS_HOME overrides both") {
    std::map<std::string, std::string> env;
    const EnvLookup look = [&env](const char* k) -> const char* {
        const auto it = env.find(k);
        return it == env.end() ? nullptr : it->second.c_str();
    };
    env["HOME"] = "/home/ana";
    AppDirs d = app_dirs(look);
    CHECK(d.config == fs::path("/home/ana/.config/beatless"));
    CHECK(d.data == fs::path("/home/ana/.local/share/beatless"));
    CHECK(practice_log_path(look) == fs::path("/home/ana/.local/share/beatless/practice.sqlite3"));
    env["XDG_DATA_HOME"] = "/srv/data";
    env["XDG_CONFIG_HOME"] = "relative/ignored";  // XDG: a relative path is to be ignored
    d = app_dirs(look);
    CHECK(d.data == fs::path("/srv/data/beatless"));
    CHECK(d.config == fs::path("/home/ana/.config/beatless"));
    env["BEATLESS_HOME"] = "/tmp/bh";
    d = app_dirs(look);
    CHECK(d.config == fs::path("/tmp/bh/config"));
    CHECK(d.data == fs::path("/tmp/bh/data"));
    env.clear();
    CHECK_THROWS_WITH_AS(app_dirs(look), doctest::Contains("HOME is not set"), Error);
}

TEST_CASE("ensure_dir creates folders and names what is in the way") {
    TempDir t("dirs");
    ensure_dir(t.path / "a" / "b");
    CHECK(fs::is_directory(t.path / "a" / "b"));
    write_file(t.path / "file", "x");
    const std::string expect = "cannot create folder " + (t.path / "file" / "sub").string() + ": " +
                               (t.path / "file").string() + " is a file, not a folder";
    CHECK_THROWS_WITH_AS(ensure_dir(t.path / "file" / "sub"), expect.c_str(), Error);
}

// ---- 3. Schema, round trips, migration -------------------------------------

TEST_CASE("a new log: WAL, the current schema version, our application id") {
    TempDir t("new");
    const fs::path db = t.path / "data" / "practice.sqlite3";
    {
        PracticeLog log(db);
        CHECK(log.user_version() == PracticeLog::kSchemaVersion);
        CHECK(log.count() == 0);
    }
    CHECK(sql_text(db, "PRAGMA journal_mode") == "wal");
    CHECK(sql_text(db, "PRAGMA application_id") == std::to_string(PracticeLog::kApplicationId));
    CHECK(sql_text(db, "PRAGMA user_version") == "3");
}

TEST_CASE("many attempts written and read back identical, in time order") {
    TempDir t("roundtrip");
    ui::Rng rng(2024);
    std::vector<Attempt> written;
    {
        PracticeLog log(t.path / "p.sqlite3");
        for (int i = 0; i < 400; ++i) {
            Attempt a = random_attempt(rng, i, static_cast<std::size_t>(i % 9 == 0 ? 0 : 50 + i));
            log.add(a);
            written.push_back(a);
        }
    }
    PracticeLog log(t.path / "p.sqlite3");
    std::vector<Attempt> back = log.read();
    REQUIRE(back.size() == written.size());
    std::sort(written.begin(), written.end(), [](const Attempt& a, const Attempt& b) {
        return std::tie(a.started_at, a.uid) < std::tie(b.started_at, b.uid);
    });
    for (std::size_t i = 0; i < back.size(); ++i) CHECK_MESSAGE(same_attempt(back[i], written[i]), "attempt " << i);
    // Without traces the rest is the same.
    const std::vector<Attempt> light = log.read({}, false);
    CHECK(light.size() == back.size());
    CHECK(light[5].trace.empty());
    CHECK(light[5].uid == back[5].uid);
}

TEST_CASE("add() stamps a uid and a UTC start time, and refuses bad attempts whole") {
    TempDir t("stamp");
    PracticeLog log(t.path / "p.sqlite3");
    Attempt a;
    a.drill = "hold-tritones";
    a.target = "7/5";
    log.add(a);
    CHECK(is_uid(a.uid));
    CHECK(is_utc_iso8601(a.started_at));
    Attempt bad = a;
    bad.uid.clear();
    bad.settings_json = "{not json";
    CHECK_THROWS_WITH_AS(log.add(bad), doctest::Contains("settings are not a JSON object"), LogError);
    Attempt dup = a;  // same uid: the unique index refuses it
    CHECK_THROWS_AS(log.add(dup), LogError);
    CHECK(log.count() == 1);
}

TEST_CASE("trace BLOBs are 16-byte little-endian float32 records") {
    const std::vector<TraceRecord> tr = {{0.0f, 220.0f, 1.5f, 1.0f}};
    const std::string blob = encode_trace(tr);
    // struct.pack('<4f', 0, 220, 1.5, 1).hex() in Python
    CHECK(blob == std::string("\x00\x00\x00\x00\x00\x00\x5c\x43\x00\x00\xc0\x3f\x00\x00\x80\x3f", 16));
    CHECK_THROWS_AS(decode_trace(blob.data(), 15), LogError);
}

TEST_CASE("a version 1 log is migrated to version 3 and keeps every attempt") {
    TempDir t("migrate");
    const fs::path db = t.path / "old.sqlite3";
    {
        sqlite3* h = nullptr;
        REQUIRE(sqlite3_open(db.c_str(), &h) == SQLITE_OK);
        const std::string sql = read_file(fs::path(BEATLESS_SOURCE_DIR) / "tests" / "data" / "practice_v1.sql");
        REQUIRE(sqlite3_exec(h, sql.c_str(), nullptr, nullptr, nullptr) == SQLITE_OK);
        sqlite3_close(h);
    }
    REQUIRE(sql_text(db, "PRAGMA user_version") == "1");
    PracticeLog log(db);
    CHECK(log.user_version() == 3);
    const std::vector<Attempt> all = log.read();
    REQUIRE(all.size() == 3);
    std::set<std::string> uids;
    for (const Attempt& a : all) {
        CHECK(is_uid(a.uid));
        uids.insert(a.uid);
        CHECK(a.performer.empty());
    }
    CHECK(uids.size() == 3);
    CHECK(all[0].target == "7/5");
    CHECK(all[0].target_name == "septimal tritone");
    CHECK(all[0].mean_dev_cents == -3.25);
    CHECK(all[0].locked == std::optional<bool>(true));
    REQUIRE(all[0].trace.size() == 2);
    CHECK(all[0].trace[0].f0_hz == 220.0f);
    CHECK(all[0].trace[1].t_s == 0.005f);
    CHECK(all[0].trace[1].dev_cents == 9.3f);
    CHECK(all[1].locked == std::optional<bool>(false));
    CHECK(std::isnan(all[1].time_to_lock_s));
    CHECK(all[1].trace.empty());
    CHECK(all[2].kind == AttemptKind::ear);
    CHECK(all[2].trials == std::optional<int>(48));
    CHECK(all[2].threshold_cents == 14.2);
    // v3's columns: an old ear session says nothing of its method or interval.
    CHECK(all[2].method.empty());
    CHECK(all[2].estimate.empty());
    CHECK(std::isnan(all[2].threshold_lo_cents));
    CHECK(std::isnan(all[2].threshold_hi_cents));
    // The new columns work: a second attempt with the same uid is refused.
    Attempt again = all[0];
    CHECK_THROWS_AS(log.add(again), LogError);
    CHECK(sql_text(db, "PRAGMA integrity_check") == "ok");
}

TEST_CASE("a newer schema, another program's SQLite file, or not SQLite at all") {
    TempDir t("foreign");
    {
        sqlite3* h = nullptr;
        sqlite3_open((t.path / "newer.sqlite3").c_str(), &h);
        sqlite3_exec(h, "PRAGMA application_id = 1112820807; CREATE TABLE x (a); PRAGMA user_version = 9;", nullptr,
                     nullptr, nullptr);
        sqlite3_close(h);
        sqlite3_open((t.path / "other.sqlite3").c_str(), &h);
        sqlite3_exec(h, "CREATE TABLE notes (a); PRAGMA user_version = 1;", nullptr, nullptr, nullptr);
        sqlite3_close(h);
    }
    write_file(t.path / "text.sqlite3", std::string(4096, 'x'));
    try {
        PracticeLog log(t.path / "newer.sqlite3");
        FAIL("opened a newer schema");
    } catch (const LogError& e) {
        CHECK(e.problem() == LogProblem::too_new);
        CHECK(std::string(e.what()).find("written by a newer beatless (schema 9; this one knows up to 3)") !=
              std::string::npos);
    }
    CHECK_THROWS_WITH_AS(PracticeLog(t.path / "other.sqlite3"), doctest::Contains("not a beatless practice log"),
                         LogError);
    try {
        PracticeLog log(t.path / "text.sqlite3");
        FAIL("opened a text file");
    } catch (const LogError& e) {
        CHECK(e.problem() == LogProblem::not_a_log);
        CHECK(std::string(e.what()).starts_with("practice log " + (t.path / "text.sqlite3").string() + ": "));
    }
}

// ---- 4. Crash safety -------------------------------------------------------

TEST_CASE("SIGKILL in the middle of writes: the file passes integrity_check and keeps every committed attempt") {
    TempDir t("kill");
    const fs::path db = t.path / "p.sqlite3";
    std::set<std::string> committed;
    const int delays_ms[] = {5, 40, 90, 150, 230, 310};
    for (int round = 0; round < 6; ++round) {
        int fds[2];
        REQUIRE(pipe(fds) == 0);
        const pid_t child = fork();
        REQUIRE(child >= 0);
        if (child == 0) {
            close(fds[0]);
            try {
                PracticeLog log(db);
                ui::Rng rng(static_cast<std::uint64_t>(round) * 1000 + 7);
                for (int i = 0;; ++i) {
                    Attempt a = random_attempt(rng, i, 6000);  // 30 s at a 5 ms hop
                    log.add(a);
                    const std::string line = a.uid + "\n";
                    if (write(fds[1], line.data(), line.size()) != static_cast<ssize_t>(line.size())) _exit(3);
                }
            } catch (const std::exception& e) {
                std::fprintf(stderr, "writer child: %s\n", e.what());
                _exit(2);
            }
        }
        close(fds[1]);
        usleep(static_cast<useconds_t>(delays_ms[round]) * 1000);
        kill(child, SIGKILL);
        int status = 0;
        waitpid(child, &status, 0);
        CHECK_MESSAGE(WIFSIGNALED(status), "the writer ended by itself with status " << WEXITSTATUS(status));
        std::string reported;
        char buf[4096];
        ssize_t n;
        while ((n = read(fds[0], buf, sizeof buf)) > 0) reported.append(buf, static_cast<std::size_t>(n));
        close(fds[0]);
        std::istringstream lines(reported);
        for (std::string uid; std::getline(lines, uid);)
            if (uid.size() == 32) committed.insert(uid);

        if (!fs::exists(db)) {  // killed before the file was created: nothing committed, nothing to check
            CHECK(committed.empty());
            continue;
        }
        CHECK(sql_text(db, "PRAGMA integrity_check", SQLITE_OPEN_READWRITE) == "ok");
        PracticeLog log(db);
        std::set<std::string> present;
        for (const Attempt& a : log.read({}, true)) {
            present.insert(a.uid);
            CHECK(a.trace.size() == 6000);  // never half an attempt
        }
        for (const std::string& uid : committed)
            CHECK_MESSAGE(present.count(uid) == 1, "lost committed attempt " << uid);
        // At most the one attempt committed just before its uid reached the pipe is extra.
        CHECK(present.size() <= committed.size() + static_cast<std::size_t>(round + 1));
        for (const std::string& uid : present) committed.insert(uid);
    }
    MESSAGE("attempts committed across the kills: " << committed.size());
    CHECK(committed.size() > 0);
}

// ---- 5. Full, read-only and missing disks ----------------------------------

TEST_CASE("a full disk: the attempt stays in memory with a one-line warning, and is written on the next save") {
    TempDir t("full");
    const fs::path db = t.path / "p.sqlite3";
    { PracticeLog make(db); }  // the schema takes a few pages
    LogOptions o;
    o.max_page_count = 12;  // 48 KB at 4 KB pages: no room for a 96 KB trace
    LogWriter w(db, o);
    ui::Rng rng(5);
    Attempt a1 = random_attempt(rng, 1, 6000), a2 = random_attempt(rng, 2, 6000);
    a1.started_at.clear();  // the writer stamps it at save time, not at the retry
    const SaveResult r1 = w.save(a1);
    CHECK(r1.saved == 0);
    CHECK(r1.pending == 1);
    CHECK(r1.warning.find("the disk is full") != std::string::npos);
    CHECK(r1.warning.find("1 attempt kept in memory, will retry on the next save") != std::string::npos);
    CHECK(r1.warning.find('\n') == std::string::npos);
    const std::string stamped = w.pending_attempts().front().started_at;
    CHECK(is_utc_iso8601(stamped));
    const SaveResult r2 = w.save(a2);
    CHECK(r2.pending == 2);
    CHECK(sql_text(db, "PRAGMA integrity_check") == "ok");
    CHECK(sql_text(db, "SELECT count(*) FROM attempt") == "0");
    // Space comes back: the next save writes the kept attempts first, in order.
    REQUIRE(w.log() != nullptr);
    w.log()->set_max_page_count(0);
    Attempt a3 = random_attempt(rng, 3, 100);
    const SaveResult r3 = w.save(a3);
    CHECK(r3.saved == 3);
    CHECK(r3.pending == 0);
    CHECK(r3.warning.empty());
    PracticeLog log(db);
    const auto all = log.read();
    REQUIRE(all.size() == 3);
    std::set<std::string> uids;
    for (const Attempt& a : all) uids.insert(a.uid);
    CHECK(uids.count(a2.uid) == 1);
    CHECK(uids.count(a3.uid) == 1);
    bool found_stamped = false;
    for (const Attempt& a : all) found_stamped |= a.started_at == stamped;
    CHECK(found_stamped);
}

TEST_CASE("a read-only log: warned, kept, and recoverable through the pending CSV") {
    // Root ignores file permissions, so read-only is SQLite's read-only open
    // (the same SQLITE_READONLY a read-only mount gives).
    TempDir t("ro");
    const fs::path db = t.path / "p.sqlite3";
    { PracticeLog make(db); }
    LogOptions o;
    o.read_only = true;
    {
        PracticeLog ro(db, o);
        Attempt a;
        a.drill = "d";
        a.target = "7/5";
        try {
            ro.add(a);
            FAIL("wrote to a read-only log");
        } catch (const LogError& e) {
            CHECK(e.problem() == LogProblem::read_only);
            CHECK(std::string(e.what()).find("the file is read-only") != std::string::npos);
        }
    }
    LogWriter w(db, o);
    ui::Rng rng(9);
    const Attempt a = random_attempt(rng, 4, 200);
    const SaveResult r = w.save(a);
    CHECK(r.pending == 1);
    CHECK(r.warning.find("read-only") != std::string::npos);
    CHECK(w.retry().pending == 1);  // still read-only: still kept
    // The program can write what is pending as CSV, and import it later.
    PracticeLog other(t.path / "q.sqlite3");
    const ImportResult imp = import_csv(other, w.pending_csv(), "pending.csv");
    CHECK(imp.added == 1);
    CHECK(same_attempt(other.read().at(0), a));
}

TEST_CASE("a folder that cannot be created: kept in memory until it can") {
    TempDir t("nodir");
    write_file(t.path / "blocker", "a file where the data folder should be");
    // The default log's own folder is the one the program makes (a folder the user names must exist).
    ::setenv("BEATLESS_HOME", (t.path / "blocker").c_str(), 1);
    const fs::path db = practice_log_path();
    CHECK(db == t.path / "blocker" / "data" / "practice.sqlite3");
    LogWriter w(db);
    ui::Rng rng(3);
    const Attempt a1 = random_attempt(rng, 1, 50);
    const SaveResult r1 = w.save(a1);
    CHECK(r1.pending == 1);
    CHECK(r1.warning.find("cannot create folder") != std::string::npos);
    CHECK(r1.warning.find("is a file, not a folder") != std::string::npos);
    fs::remove(t.path / "blocker");  // the user fixes it
    const SaveResult r2 = w.save(random_attempt(rng, 2, 50));
    CHECK(r2.saved == 2);
    CHECK(r2.pending == 0);
    PracticeLog log(db);
    ::unsetenv("BEATLESS_HOME");
    CHECK(log.count() == 2);
    CHECK(log.has_uid(a1.uid));
}

// ---- 6. CSV export and import ----------------------------------------------

TEST_CASE("base64 matches RFC 4648's test vectors") {
    // RFC 4648 section 10.
    const std::pair<const char*, const char*> v[] = {{"", ""},
                                                     {"f", "Zg=="},
                                                     {"fo", "Zm8="},
                                                     {"foo", "Zm9v"},
                                                     {"foob", "Zm9vYg=="},
                                                     {"fooba", "Zm9vYmE="},
                                                     {"foobar", "Zm9vYmFy"}};
    for (const auto& [plain, coded] : v) {
        CHECK(base64_encode(plain) == coded);
        CHECK(base64_decode(coded) == plain);
    }
    CHECK_THROWS_AS(base64_decode("Zm9"), Error);
    CHECK_THROWS_AS(base64_decode("Zm=v"), Error);
    CHECK_THROWS_AS(base64_decode("Z!9v"), Error);
}

TEST_CASE("CSV round trip: export, import into an empty log, export again gives the same bytes") {
    TempDir t("csv");
    ui::Rng rng(77);
    PracticeLog a(t.path / "a.sqlite3");
    for (int i = 0; i < 120; ++i) {
        Attempt x = random_attempt(rng, i, static_cast<std::size_t>(i % 4 == 0 ? 0 : 20));
        a.add(x);
    }
    std::ostringstream first;
    CHECK(export_csv(a, {}, true, first) == 120);
    PracticeLog b(t.path / "b.sqlite3");
    const ImportResult r = import_csv(b, first.str(), "first.csv");
    CHECK(r.added == 120);
    std::ostringstream second;
    export_csv(b, {}, true, second);
    CHECK(second.str() == first.str());
    // Importing again adds nothing.
    const ImportResult again = import_csv(b, first.str(), "first.csv");
    CHECK(again.added == 0);
    CHECK(again.skipped == 120);
    // Without traces: the trace column is gone, the rest identical.
    std::ostringstream light;
    export_csv(a, {}, false, light);
    CHECK(light.str().starts_with(csv_header(false)));
    CHECK(light.str().find(",trace\n") == std::string::npos);
    PracticeLog c(t.path / "c.sqlite3");
    CHECK(import_csv(c, light.str(), "light.csv").added == 120);
}

TEST_CASE("a CSV exported before schema 3 (no method, estimate or interval columns) still imports") {
    TempDir t("csvv2");
    PracticeLog log(t.path / "p.sqlite3");
    const std::string v2 =
        "uid,started_at,drill,kind,target,target_name,root_hz,performer,dur_s,locked,time_to_lock_s,mean_dev_cents,"
        "spread_cents,in_tolerance_share,threshold_cents,trials,correct_share,settings\n"
        "0123456789abcdef0123456789abcdef,2025-03-01T14:03:22.123Z,ear-tritones,ear,11/8 "
        "7/5,,110,,60,,,,,,14.2,48,0.7,{}\n";
    CHECK(import_csv(log, v2, "old.csv").added == 1);
    const auto all = log.read();
    REQUIRE(all.size() == 1);
    CHECK(all[0].threshold_cents == 14.2);
    CHECK(all[0].method.empty());
    CHECK(std::isnan(all[0].threshold_hi_cents));
}

TEST_CASE("bad CSV rows are refused with file:line and nothing is imported") {
    TempDir t("csvbad");
    ui::Rng rng(8);
    std::vector<Attempt> v;
    for (int i = 0; i < 4; ++i) v.push_back(random_attempt(rng, i + 1, 3));
    v[0].target_name = "two\nlines";  // a quoted line break: the next row starts one line later
    const std::string good = attempts_csv(v, true);
    PracticeLog log(t.path / "p.sqlite3");
    // Rows: header line 1, row 1 on lines 2-3, row 2 on line 4, row 3 on line 5.
    auto replace_in_row = [&](int row, const std::string& from, const std::string& to) {
        std::string text = good;
        std::size_t pos = 0;
        for (int r = 0; r < row; ++r) pos = text.find(v[static_cast<std::size_t>(r)].uid, pos) + 1;
        const std::size_t at = text.find(from, pos);
        REQUIRE(at != std::string::npos);
        return text.replace(at, from.size(), to);
    };
    auto error_of = [&](const std::string& text) {
        try {
            import_csv(log, text, "student.csv");
        } catch (const Error& e) {
            return std::string(e.what());
        }
        return std::string("(no error)");
    };
    CHECK(error_of(replace_in_row(2, v[1].started_at, "2025-02-30T10:00:00.000Z")) ==
          "student.csv:4: started_at '2025-02-30T10:00:00.000Z' is not a UTC time like 2025-03-01T14:03:22.123Z");
    CHECK(error_of(replace_in_row(3, ",hold,", ",sing,"))
              .starts_with("student.csv:5: kind 'sing' is neither hold nor ear"));
    CHECK(error_of(replace_in_row(1, ",hold,", ",hold,")) == "(no error)");
    CHECK(log.count() == 4);
    // A fresh log: every bad file below leaves it empty.
    PracticeLog empty(t.path / "e.sqlite3");
    auto refused = [&](const std::string& text, const std::string& expect) {
        try {
            import_csv(empty, text, "student.csv");
            FAIL("accepted: " << expect);
        } catch (const Error& e) {
            CHECK(std::string(e.what()).starts_with(expect));
        }
        CHECK(empty.count() == 0);
    };
    std::string bad_target = good;
    bad_target.replace(bad_target.find("," + v[2].target + ",", bad_target.find(v[2].uid)), v[2].target.size() + 2,
                       ",7/0,");
    refused(bad_target, "student.csv:5: target has a bad target: ");
    refused(good.substr(0, good.size() - 30), "student.csv:7: ");  // the last row cut short
    refused("uid,started_at\n", "student.csv:1: missing column 'drill'");
    refused("uid,when\n", "student.csv:1: unknown column 'when'");
    refused(csv_header(true) + "x\"y\n", "student.csv:2: a quote inside an unquoted field");
    std::string dup = good + good.substr(good.find('\n') + 1);
    refused(dup, "student.csv:");
    refused(replace_in_row(2, ",\"{", ",[1],\"{"), "student.csv:4: 24 fields, the header has 23");
}

// ---- 7. The history command ------------------------------------------------

namespace {

Attempt hold(const std::string& when, const std::string& target, std::optional<bool> locked, double ttl, double dev,
             double spread, double in_tol) {
    Attempt a;
    a.started_at = when;
    a.drill = "hold-septimal-tritones";
    a.target = target;
    a.target_name = target == "7/5" ? "septimal tritone" : "large septimal tritone";
    a.root_hz = 146.832;
    a.locked = locked;
    a.time_to_lock_s = ttl;
    a.mean_dev_cents = dev;
    a.spread_cents = spread;
    a.in_tolerance_share = in_tol;
    return a;
}

Attempt ear_session(const std::string& when, double threshold_cents) {
    Attempt ear;
    ear.started_at = when;
    ear.drill = "ear-tritones";
    ear.kind = AttemptKind::ear;
    ear.target = "11/8 7/5 45/32 600c 10/7";
    ear.threshold_cents = threshold_cents;
    return ear;
}

void fill_known(PracticeLog& log) {
    // Week of 2025-03-03 (Mon): three 7/5 and one 10/7; week of 2025-03-10: one 7/5.
    std::vector<Attempt> v = {
        hold("2025-03-03T10:00:00.000Z", "7/5", true, 1.0, -4.0, 3.0, 0.5),
        hold("2025-03-05T10:00:00.000Z", "7/5", true, 2.0, -2.0, 4.0, 0.7),
        hold("2025-03-09T23:59:59.999Z", "7/5", false, NAN, 0.0, 5.0, 0.3),
        hold("2025-03-04T10:00:00.000Z", "10/7", true, 0.5, 6.0, 2.0, 0.9),
        hold("2025-03-10T00:00:00.000Z", "7/5", true, 1.5, -1.0, 2.0, 0.8),
    };
    v.push_back(ear_session("2025-03-06T12:00:00.000Z", 14.0));
    v.push_back(ear_session("2025-03-12T12:00:00.000Z", 10.0));
    log.add_all(v);
}

}  // namespace

TEST_CASE("week and month buckets (ISO 8601 weeks start on Monday)") {
    // Python: date - timedelta(days=date.weekday())
    CHECK(period_start("2025-03-05", Period::week) == "2025-03-03");
    CHECK(period_start("2025-03-09", Period::week) == "2025-03-03");
    CHECK(period_start("2025-03-10", Period::week) == "2025-03-10");
    CHECK(period_start("2025-01-01", Period::week) == "2024-12-30");
    CHECK(period_start("2025-01-01", Period::month) == "2025-01");
    CHECK(period_start("2025-01-01", Period::day) == "2025-01-01");
}

TEST_CASE("history sums: per target and per week, hand-worked") {
    TempDir t("sums");
    PracticeLog log(t.path / "p.sqlite3");
    fill_known(log);
    const HistorySummary s = summarize_history(log, HistoryOptions{{}, Period::week});
    CHECK(s.attempts == 7);
    REQUIRE(s.totals.size() == 3);
    // Holds ordered by pitch: 7/5 (582.5 c) before 10/7 (617.5 c), then the ear drill.
    CHECK(s.totals[0].key == "7/5");
    CHECK(s.totals[1].key == "10/7");
    CHECK(s.totals[2].key == "ear-tritones");
    const HistoryLine& sept = s.totals[0];
    CHECK(sept.attempts == 4);
    CHECK(sept.locked_share == doctest::Approx(0.75));                       // 3 of 4
    CHECK(sept.time_to_lock_s == doctest::Approx((1.0 + 2.0 + 1.5) / 3.0));  // the three that locked
    CHECK(sept.mean_dev_cents == doctest::Approx((-4.0 - 2.0 + 0.0 - 1.0) / 4.0));
    CHECK(sept.spread_cents == doctest::Approx((3.0 + 4.0 + 5.0 + 2.0) / 4.0));
    CHECK(sept.in_tolerance_share == doctest::Approx((0.5 + 0.7 + 0.3 + 0.8) / 4.0));
    // These ear rows are schema 2's (no method, no answers): they count as
    // attempts but give no threshold (their staircase measured none).
    CHECK(s.totals[2].attempts == 2);
    CHECK(std::isnan(s.totals[2].threshold_cents));
    CHECK(s.totals[2].estimate.empty());
    // Over time: 7/5 in the weeks of 03-03 (3 attempts) and 03-10 (1).
    std::vector<HistoryLine> sept_weeks;
    for (const auto& l : s.over_time)
        if (l.key == "7/5") sept_weeks.push_back(l);
    REQUIRE(sept_weeks.size() == 2);
    CHECK(sept_weeks[0].period == "2025-03-03");
    CHECK(sept_weeks[0].attempts == 3);
    CHECK(sept_weeks[0].mean_dev_cents == doctest::Approx(-2.0));
    CHECK(sept_weeks[1].period == "2025-03-10");
    CHECK(sept_weeks[1].mean_dev_cents == doctest::Approx(-1.0));
    // Filters: since, target (ear drills that offer it count too), drill.
    const HistorySummary since = summarize_history(log, HistoryOptions{{"", "2025-03-10", ""}, Period::week});
    CHECK(since.attempts == 2);
    const HistorySummary only = summarize_history(log, HistoryOptions{{"10/7", "", ""}, Period::month});
    CHECK(only.attempts == 3);  // one 10/7 hold and two ear sessions offering 10/7
    const HistorySummary ear = summarize_history(log, HistoryOptions{{"", "", "ear-tritones"}, Period::day});
    CHECK(ear.attempts == 2);
}

TEST_CASE("beatless history: text, json and csv, filters and errors") {
    TempDir t("cmd");
    {
        PracticeLog log(t.path / "data" / "practice.sqlite3");
        fill_known(log);
    }
    const Run text = run_program("history", t.path);
    CHECK(text.code == 0);
    CHECK(text.out.find("7 attempts") != std::string::npos);
    CHECK(text.out.find("Holds per target") != std::string::npos);
    CHECK(text.out.find("septimal tritone") != std::string::npos);
    CHECK(text.out.find("-1.8 c") != std::string::npos);  // 7/5 mean deviation -1.75
    CHECK(text.out.find("Ear training threshold per week") != std::string::npos);
    CHECK(text.out.find("12.0 c") == std::string::npos);  // no mean of old staircase thresholds

    const Run json = run_program("history --format json --target 7:5", t.path);
    CHECK(json.code == 0);
    CHECK(json.out.find("\"attempts\": 6") != std::string::npos);  // 4 holds of 7/5 + 2 ear sessions offering it
    CHECK(json.out.find("\"mean_dev_cents\": -1.75") != std::string::npos);
    CHECK(json.out.find("\"locked_share\": 0.75") != std::string::npos);

    const Run csv = run_program("history --format csv --by month", t.path);
    CHECK(csv.code == 0);
    CHECK(csv.out.starts_with("period,kind,key,name,attempts,"));
    CHECK(csv.out.find("\nall,hold,7/5,septimal tritone,4,0.75,1.5,-1.75,3.5,0.575,,,,,,1\n") != std::string::npos);
    CHECK(csv.out.find("\n2025-03,ear,ear-tritones,") != std::string::npos);

    const Run bad_since = run_program("history --since 2025-02-30", t.path);
    CHECK(bad_since.code == 2);
    CHECK(bad_since.err ==
          "beatless: --since '2025-02-30': not a date (use YYYY-MM-DD or YYYY-MM-DDTHH:MM[:SS], UTC)\n");
    const Run bad_target = run_program("history --target 7/0", t.path);
    CHECK(bad_target.code == 2);
    CHECK(bad_target.err.starts_with("beatless: --target: "));
    CHECK(run_program("history --by year", t.path).code == 2);

    TempDir empty("cmd-empty");
    const Run none = run_program("history", empty.path);
    CHECK(none.code == 0);
    CHECK(none.out.find("0 attempts") != std::string::npos);
    CHECK_FALSE(fs::exists(empty.path / "data" / "practice.sqlite3"));  // looking creates nothing
}

TEST_CASE("two-voice holds (the interval of a double stop) are kept apart from one-voice holds of the same target") {
    // Hand-worked sums. A hold drill run with --voices 2 logs "voices": 2 in its settings
    // (ui/session/drill_files.cpp); an attempt without the key, or with settings that
    // are not JSON, is one voice.
    TempDir t("voices");
    {
        PracticeLog log(t.path / "data" / "practice.sqlite3");
        fill_known(log);  // 7/5: four one-voice holds, mean deviation -1.75 c
        std::vector<Attempt> v = {hold("2025-03-06T10:00:00.000Z", "7/5", true, 2.0, 3.0, 1.0, 0.6),
                                  hold("2025-03-11T10:00:00.000Z", "7/5", false, NAN, 5.0, 3.0, 0.2),
                                  hold("2025-03-11T11:00:00.000Z", "7/5", true, 1.0, 1.0, 1.0, 0.9)};
        v[0].settings_json = R"({"tolerance_cents": 5, "voices": 2})";
        v[1].settings_json = R"({"voices":2})";
        v[2].settings_json = R"({"voices": 1, "note": "one voice said outright"})";
        log.add_all(v);

        const HistorySummary s = summarize_history(log, HistoryOptions{{}, Period::week});
        CHECK(s.attempts == 10);
        REQUIRE(s.totals.size() == 4);  // 7/5 one voice, 7/5 two voices, 10/7, the ear drill
        CHECK(s.totals[0].key == "7/5");
        CHECK(s.totals[0].voices == 1);
        CHECK(s.totals[0].attempts == 5);
        CHECK(s.totals[0].mean_dev_cents == doctest::Approx((-4.0 - 2.0 + 0.0 - 1.0 + 1.0) / 5.0));
        CHECK(s.totals[1].key == "7/5");
        CHECK(s.totals[1].voices == 2);
        CHECK(s.totals[1].attempts == 2);
        CHECK(s.totals[1].mean_dev_cents == doctest::Approx(4.0));
        CHECK(s.totals[1].locked_share == doctest::Approx(0.5));
        CHECK(s.totals[2].key == "10/7");
        // Over time, the two-voice 7/5 has its own line per week.
        int pair_weeks = 0;
        for (const HistoryLine& l : s.over_time)
            if (l.key == "7/5" && l.voices == 2) ++pair_weeks;
        CHECK(pair_weeks == 2);

        AttemptFilter two;
        two.voices = 2;
        CHECK(log.count(two) == 2);
        AttemptFilter one;
        one.voices = 1;
        CHECK(log.count(one) == 8);  // 6 one-voice holds and the 2 ear sessions
    }
    const Run text = run_program("history", t.path);
    CHECK(text.code == 0);
    CHECK(text.out.find("  target  voices  name") != std::string::npos);
    CHECK(text.out.find("  7/5     2       septimal tritone") != std::string::npos);
    const Run pairs = run_program("history --voices 2 --format json", t.path);
    CHECK(pairs.code == 0);
    CHECK(pairs.out.find("\"attempts\": 2,") != std::string::npos);
    CHECK(pairs.out.find("\"voices\": 1") == std::string::npos);
    CHECK(pairs.out.find("\"mean_dev_cents\": 4,") != std::string::npos);
    CHECK(run_program("history --voices 3", t.path).code == 2);
    // A log with one-voice holds only keeps its table as it was: no voices column.
    TempDir plain("one-voice-only");
    {
        PracticeLog log(plain.path / "data" / "practice.sqlite3");
        fill_known(log);
    }
    CHECK(run_program("history", plain.path).out.find("  target  name") != std::string::npos);
}

TEST_CASE("the Drills screen's history reads the attempts of the mode in use: one voice or the interval of two") {
    // Hand-worked: the day's mean deviation per target, as `beatless history --by day --voices N`.
    TempDir t("drill-voices");
    const fs::path path = t.path / "p.sqlite3";
    {
        PracticeLog log(path);
        std::vector<Attempt> v = {hold("2025-03-06T10:00:00.000Z", "7/4", true, 1.0, -1.0, 1.0, 0.9),
                                  hold("2025-03-06T10:01:00.000Z", "7/4", true, 1.0, 4.0, 1.0, 0.9),
                                  hold("2025-03-06T10:02:00.000Z", "7/4", true, 1.0, 6.0, 1.0, 0.9)};
        for (Attempt& a : v) a.drill = "hold-double-stops";
        v[1].settings_json = v[2].settings_json = R"({"voices": 2})";
        log.add_all(v);
    }
    const Drill d = load_drill("hold-double-stops");
    const DrillProgress one = read_drill_progress(path.string(), d, true, 1);
    const DrillProgress two = read_drill_progress(path.string(), d, true, 2);
    CHECK(one.voices == 1);
    CHECK(two.voices == 2);
    auto series = [](const DrillProgress& p, const std::string& key) -> const DrillProgressSeries* {
        for (const DrillProgressSeries& s : p.series)
            if (s.key == key) return &s;
        return nullptr;
    };
    const DrillProgressSeries* a = series(one, "7/4");
    const DrillProgressSeries* b = series(two, "7/4");
    REQUIRE(a != nullptr);
    REQUIRE(b != nullptr);
    REQUIRE(a->points.size() == 1);
    REQUIRE(b->points.size() == 1);
    CHECK(a->points[0].value == doctest::Approx(-1.0));
    CHECK(b->points[0].value == doctest::Approx(5.0));
    CHECK(b->attempts == 2);
}

TEST_CASE("the demo performer's and the simulated listener's attempts are kept apart from the performer's own") {
    TempDir t("sim");
    {
        PracticeLog log(t.path / "data" / "practice.sqlite3");
        fill_known(log);  // the performer's own: 5 holds, 2 ear sessions
        std::vector<Attempt> v = {hold("2025-03-07T10:00:00.000Z", "7/5", true, 1.0, 0.0, 1.0, 1.0),
                                  hold("2025-03-07T10:01:00.000Z", "10/7", true, 1.0, 0.0, 1.0, 1.0)};
        v[0].performer = v[1].performer = kDemoPerformer;
        Attempt ear = ear_session("2025-03-07T11:00:00.000Z", 3.0);
        ear.performer = kSimulatedListener;
        v.push_back(ear);
        log.add_all(v);

        AttemptFilter own;
        own.simulated = false;
        CHECK(log.count(AttemptFilter{}) == 10);
        CHECK(log.count(own) == 7);
        const HistorySummary s = summarize_history(log, HistoryOptions{own, Period::week});
        CHECK(s.attempts == 7);
        CHECK(s.simulated_left_out == 3);
        // The 7/5 mean is the performer's alone, as in the hand-worked sums: -7/4.
        REQUIRE(!s.totals.empty());
        CHECK(s.totals[0].key == "7/5");
        CHECK(s.totals[0].mean_dev_cents == doctest::Approx(-1.75));
        CHECK(summarize_history(log, HistoryOptions{AttemptFilter{}, Period::week}).simulated_left_out == 0);
    }
    const Run text = run_program("history", t.path);
    CHECK(text.code == 0);
    CHECK(text.out.find(": 7 attempts\n(3 attempts by the demo performer or the simulated listener left out; "
                        "--with-demo shows them)\n") != std::string::npos);
    const Run all = run_program("history --with-demo --format json", t.path);
    CHECK(all.code == 0);
    CHECK(all.out.find("\"attempts\": 10") != std::string::npos);
    CHECK(all.out.find("\"simulated_left_out\": 0") != std::string::npos);
    // An export for a teacher holds the performer's own attempts unless asked.
    const Run exp = run_program("history --export - --no-traces", t.path);
    CHECK(exp.code == 0);
    CHECK(std::count(exp.out.begin(), exp.out.end(), '\n') == 1 + 7);  // header + rows
}

TEST_CASE("beatless history --export / --import round-trips through the program") {
    TempDir student("student"), teacher("teacher");
    {
        PracticeLog log(student.path / "data" / "practice.sqlite3");
        ui::Rng rng(31);
        for (int i = 0; i < 30; ++i) {
            Attempt a = random_attempt(rng, i, 40);
            log.add(a);
        }
    }
    const fs::path a_csv = student.path / "a.csv", b_csv = teacher.path / "b.csv";
    const Run ex = run_program("history --export '" + a_csv.string() + "'", student.path);
    CHECK(ex.code == 0);
    CHECK(ex.out == "exported 30 attempts to " + a_csv.string() + "\n");
    const Run im = run_program("history --import '" + a_csv.string() + "'", teacher.path);
    CHECK(im.code == 0);
    CHECK(im.out.starts_with("imported 30 attempts from " + a_csv.string()));
    CHECK(run_program("history --export '" + b_csv.string() + "'", teacher.path).code == 0);
    CHECK(read_file(a_csv) == read_file(b_csv));
    const Run twice = run_program("history --import '" + a_csv.string() + "'", teacher.path);
    CHECK(twice.out.find("imported 0 attempts") != std::string::npos);
    CHECK(twice.out.find("(30 already in the log)") != std::string::npos);
    // Stdout export equals the file.
    CHECK(run_program("history --export -", student.path).out == read_file(a_csv));

    // A bad row: refused with file:line, exit 1, nothing imported.
    std::string text = read_file(a_csv);
    const std::size_t second_row = text.find('\n', text.find('\n') + 1) + 1;
    text.insert(text.find(",hold,", second_row) + 1, "x");
    const fs::path bad = teacher.path / "bad.csv";
    write_file(bad, text);
    TempDir fresh("fresh");
    const Run refused = run_program("history --import '" + bad.string() + "'", fresh.path);
    CHECK(refused.code == 1);
    CHECK(refused.err.starts_with("beatless: " + bad.string() + ":"));
    CHECK(refused.err.find("kind 'xhold' is neither hold nor ear") != std::string::npos);
    PracticeLog after(fresh.path / "data" / "practice.sqlite3");
    CHECK(after.count() == 0);
    const Run missing = run_program("history --import '" + (fresh.path / "nope.csv").string() + "'", fresh.path);
    CHECK(missing.code == 1);
    CHECK(missing.err == "beatless: " + (fresh.path / "nope.csv").string() + ": no such file\n");
    CHECK(run_program("history --export a.csv --import b.csv", fresh.path).code == 2);
}
