"""Shared by the JACK tests: stopping a child's process group, and running a
test's main so that a hang or crash fails it and every child is killed."""
import os
import signal
import subprocess
import sys


def stop(p, sig=signal.SIGTERM):
    if p.poll() is None:
        try:
            os.killpg(p.pid, sig)
        except ProcessLookupError:
            pass
        try:
            p.wait(timeout=5)
        except subprocess.TimeoutExpired:
            os.killpg(p.pid, signal.SIGKILL)
            p.wait(timeout=5)


def _jack_tool(args, env, timeout_s=10):
    """Runs one of JACK's command-line clients. On a loaded machine a client
    can hang on the server's socket for seconds; that counts as a failed try
    (None), which the callers' own deadlines retry, rather than an exception
    ending the whole test."""
    try:
        return subprocess.run(args, env=env, capture_output=True, text=True, timeout=timeout_s)
    except subprocess.TimeoutExpired:
        return None


def jack_ports(env):
    """The server's ports, one per line (jack_lsp); none when it failed."""
    r = _jack_tool(["jack_lsp"], env)
    return r.stdout.splitlines() if r is not None and r.returncode == 0 else []


def jack_connect(env, src, dst):
    """One try at connecting src to dst (jack_connect); True when it did."""
    r = _jack_tool(["jack_connect", src, dst], env)
    return r is not None and r.returncode == 0


def run(main, children):
    code = 1
    try:
        code = main()
    except Exception as e:  # a hang or crash fails the test, never blocks it
        print("FAIL: %s" % e)
        code = 1
    finally:
        # SIGTERM first (stop() falls back to SIGKILL after 5 s): a jackd
        # killed outright leaves its entry in JACK's shared server registry,
        # and after eight such entries no new server can start on the machine.
        for c in reversed(children):
            stop(c)
    sys.exit(code)
