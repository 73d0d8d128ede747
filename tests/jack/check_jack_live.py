#!/usr/bin/python3
"""The live path end to end through a real sound server: jackd's dummy driver.

Starts a private jackd (dummy driver, 48 kHz, 256-frame periods), then runs
`beatless devices` and `beatless listen` against PortAudio's JACK device,
wiring ports with jack_connect the way a microphone hears the loudspeakers:
  1. the drone looped back into the input without removal: readings at the
     root, A2 = 110 Hz (ISO 16: A4 = 440 Hz, 12-TET), within 1 cent;
  2. the drone looped back and a voice file at 154 Hz (7/5 above 110 Hz)
     played in by jack-play: with removal the voice is read, 0 cents from 7/5;
  3. the server is killed mid-session and restarted: readings stop, resume
     within 3 s of its return (a libjack client of our own rejoins it), and
     --seconds ends the run on time.
Skips (exit 77) when jackd is not installed. Every step has a timeout, and
jackd and every child are killed at the end, whatever happens.
Usage: check_jack_live.py path/to/beatless
"""
import json
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time

from jack_rig import jack_connect, jack_ports, stop  # shared with the MIDI test; stop: SIGTERM, then SIGKILL after 5 s

BEATLESS = sys.argv[1]
# One fixed name: JACK keeps a server in its registry (/dev/shm, at most 8) until it exits cleanly, and reclaims a
# dead one's slot only for a server of the same name, so names with a process id filled the registry after a few
# runs that were killed ("Too many servers already active"). ctest runs the sound-server tests one at a time.
SERVER = "beatless-test-live"
ENV = dict(os.environ, JACK_DEFAULT_SERVER=SERVER, JACK_NO_START_SERVER="1")
children = []
failures = []
checks = [0]


def check(cond, what):
    checks[0] += 1
    print(("ok   " if cond else "FAIL ") + what)
    if not cond:
        failures.append(what)


def start_jackd():
    p = subprocess.Popen(["jackd", "-n", SERVER, "--no-realtime", "-d", "dummy", "-r", "48000", "-p", "256"],
                         env=ENV, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    children.append(p)
    deadline = time.time() + 20
    while time.time() < deadline:
        if "system:capture_1" in jack_ports(ENV):
            return p
        time.sleep(0.2)
    raise RuntimeError("jackd did not come up within 20 s")


def connect(src, dst, timeout_s=15.0):
    deadline = time.time() + timeout_s
    while time.time() < deadline:
        if jack_connect(ENV, src, dst):
            return True
        time.sleep(0.05)
    return False


def ports(prefix):
    return [l for l in jack_ports(ENV) if l.startswith(prefix)]


def listen(args, home):
    p = subprocess.Popen([BEATLESS, "listen", "--input", "system"] + args, env=dict(ENV, BEATLESS_HOME=home),
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, start_new_session=True)
    children.append(p)
    return p


def readings(out):
    return [json.loads(l) for l in out.splitlines() if l.startswith("{")]


def main():
    if shutil.which("jackd") is None or shutil.which("jack_connect") is None:
        print("SKIP: jackd (jackd2) is not installed; CI installs it from .ci/debian-packages")
        return 77
    home = tempfile.mkdtemp(prefix="beatless-jack-")
    jackd = start_jackd()

    r = subprocess.run([BEATLESS, "devices"], env=ENV, capture_output=True, text=True, timeout=20)
    check(r.returncode == 0 and "system" in r.stdout and "JACK" in r.stdout, "devices lists the JACK 'system' device")
    check(r.stderr == "", "devices prints nothing on stderr (library noise silenced)")

    # 1. Drone looped back, no removal: the tracker hears the drone at A2.
    p = listen(["--drone", "--no-removal", "--seconds", "2.5"], home)
    check(connect("beatless:out_1", "beatless:in_1"), "drone output wired into the input")
    out, err = p.communicate(timeout=20)
    check(p.returncode == 0, "listen exits 0 (%s)" % err.strip().splitlines()[-1:])
    rs = [x for x in readings(out) if x["t"] > 1.0]
    at_root = [x for x in rs if x["f0_hz"] and abs(1200 * __import__("math").log2(x["f0_hz"] / 110.0)) < 1.0]
    check(len(rs) > 200 and len(at_root) > 0.6 * len(rs), "without removal the readings sit on the drone, 110 Hz (%d of %d)" % (len(at_root), len(rs)))
    check("input 'system' (JACK" in err and "48000 Hz" in err, "the negotiated stream is reported")

    # 2. Drone looped back plus a voice at 7/5: with removal the voice is read.
    wav = os.path.join(home, "voice.wav")
    subprocess.run([BEATLESS, "tone", "--root", "154", "--seconds", "2.5", "--timbre", "round", "--level-db", "-36", "--out", wav],
                   check=True, capture_output=True, timeout=20)
    p = listen(["--drone", "--level-db", "-30", "--target", "7/5", "--seconds", "4"], home)
    check(connect("beatless:out_1", "beatless:in_1"), "drone output wired into the input again")
    time.sleep(0.8)
    player = subprocess.Popen(["jack-play", wav], env=dict(ENV, JACK_PLAY_CONNECT_TO="nowhere:in_%d"),
                              stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    children.append(player)
    deadline = time.time() + 5
    while time.time() < deadline and not ports("jack-play"):
        time.sleep(0.02)
    play_ports = [x for x in ports("jack-play") if "out" in x]
    check(bool(play_ports) and connect(play_ports[0], "beatless:in_1"), "voice file wired into the input")
    out, err = p.communicate(timeout=25)
    stop(player)
    voiced = [x for x in readings(out) if x["f0_hz"]]
    near = [x for x in voiced if abs(x["f0_hz"] - 154.0) < 1.0]
    check(len(near) > 200, "with removal the voice at 154 Hz is read under a louder drone (%d readings)" % len(near))
    if near:  # the steady part: 0.3 s after the voice came in to 0.2 s before it left
        first, last = near[0]["t"], near[-1]["t"]
        steady = [x for x in voiced if first + 0.3 <= x["t"] <= last - 0.2]
        # The dummy server's self-connection is not a perfectly steady path
        # (its cycles are timed by a busy machine), so the check is looser
        # than the fake-device tests: the median within 0.5 cent, 80% within 2.
        devs = sorted(abs(x["dev_cents"]) for x in steady if x["dev_cents"] is not None and x["beat_partials"] == [7, 5])
        check(len(steady) > 150 and len(devs) > 0.95 * len(steady), "the steady voice is read as 7/5 with partials 7:5 (%d of %d)" % (len(devs), len(steady)))
        if devs:
            within2 = sum(d <= 2.0 for d in devs)
            check(devs[len(devs) // 2] <= 0.5 and within2 >= 0.8 * len(devs),
                  "0 cents from 7/5: median %.2f cents, %d of %d within 2 cents" % (devs[len(devs) // 2], within2, len(devs)))

    # 3. The server goes away mid-session (as when a sound card is unplugged)
    # and comes back: readings stop, resume within 3 s of its return, and
    # --seconds ends the run on time (audio heard, or the clock 1 s late).
    p = listen(["--drone", "--no-removal", "--seconds", "8"], home)
    t0 = time.time()
    stamped = []
    reader = threading.Thread(target=lambda: stamped.extend((time.time(), l) for l in p.stdout), daemon=True)
    reader.start()
    check(connect("beatless:out_1", "beatless:in_1"), "drone output wired into the input (before the loss)")
    time.sleep(2.0)
    stop(jackd, signal.SIGTERM)  # SIGKILL would leave its slot in JACK's server registry (eight slots per user)
    killed_at = time.time()
    time.sleep(2.0)
    back_at = time.time()  # the server starts now (it may answer before start_jackd() returns)
    jackd = start_jackd()
    check(connect("beatless:out_1", "beatless:in_1", timeout_s=6.0), "the program's ports are back and wired again")
    try:
        err = p.stderr.read()
        p.wait(timeout=20)
    except subprocess.TimeoutExpired:
        stop(p, signal.SIGKILL)
        err = ""
    ended_at = time.time()
    reader.join(timeout=5)
    lines = err.strip().splitlines()
    print("\n".join("     | " + l for l in lines))
    voiced = [at for at, l in stamped if l.startswith("{") and json.loads(l)["f0_hz"]]
    before = [at for at in voiced if at < killed_at]
    during = [at for at in voiced if killed_at + 1.0 < at < back_at]
    after = [at for at in voiced if at >= back_at]
    check(len(before) > 100, "readings before the server died (%d)" % len(before))
    check(len(during) == 0, "no readings while the server is gone, from 1 s after the loss (a busy machine may still be analysing audio heard before it) (%d)" % len(during))
    check(bool(after) and after[0] - back_at <= 3.0,
          "readings resume %.2f s after the server's return (within 3 s)" % ((after[0] - back_at) if after else float("inf")))
    # Timed from the first reading, when listening has begun: a sanitizer build takes 1-2 s to start, which
    # --seconds does not count (it counts audio heard, or the clock from the start of listening).
    started_at = stamped[0][0] if stamped else t0
    check(p.returncode == 0 and ended_at - started_at <= 8.0 + 1.0 + 1.5,
          "the 8-s run ends on time: %.2f s of wall time from the first reading (%.2f s from launch), exit %s"
          % (ended_at - started_at, ended_at - t0, p.returncode))
    check(sum("stopped delivering audio" in l and "trying to reopen" in l for l in lines) == 1, "one line says the device stopped")
    check(sum("is back" in l for l in lines) == 1, "one line says it is back")
    check(any("readings from" in l for l in lines), "the summary line is printed at the end")
    check(not any("Cannot" in l or "jack" in l.lower() and not l.startswith("beatless:") for l in lines), "no library noise on stderr")
    shutil.rmtree(home, ignore_errors=True)
    print("%d passed, %d failed" % (checks[0] - len(failures), len(failures)))
    return 1 if failures else 0


if __name__ == "__main__":
    code = 1
    try:
        code = main()
    except Exception as e:  # a hang or crash fails the test, never blocks it
        print("FAIL: %s" % e)
        code = 1
    finally:
        for c in reversed(children):
            stop(c, signal.SIGTERM)  # then SIGKILL after 5 s; a jackd killed outright keeps its registry slot
    sys.exit(code)
