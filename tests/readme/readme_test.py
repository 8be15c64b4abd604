#!/usr/bin/env python3
"""Keeps README.md honest: runs its examples and checks its references against the code.

Every fenced block of the README carries a marker after its language (GitHub ignores the rest
of the info string), and a block without one fails the test, so no example escapes:

  sh readme-run          run with bash (-euo pipefail) in the session directory; must exit 0
  sh readme-daemon       one `codedriftd --config FILE` line: started in the background (ports
                         rewritten to 0, --ready-file added); later blocks get the real ports
  sh readme-skip         only `make demo` / `make test` lines (run by their own tests)
  text readme-output     the exact stdout of the readme-run block before it
  text readme-stderr     the exact stderr of the readme-run block before it
  yaml readme-config file=F    written to F, then `codedriftd --check-config --config F`
  yaml readme-table file=F     written to F, then `codedrift check F`
  yaml readme-scenario file=F  written to F, then `codedrift synth F --list`
  yaml readme-default-config   equal to the embedded default (lib/src/daemon_config_default.cc)
  text readme-figure     a picture in text (no commands, no config): not executed

Blocks run in README order in one temporary directory (the session) holding a `config` link to
the source tree's config/, with the built binaries first on PATH. Addresses 127.0.0.1:PORT of
the daemon's config are replaced by the ports the daemon really bound (the README shows the
default ports; the test must not collide with anything else on the machine).

Reference checks (checked copies): the configuration keys documented equal the keys the
config reader accepts (lib/src/daemon_config*.cc); each CLI command's documented options equal
its --help; the documented HTTP routes equal daemon/src/routes.cc; the documented metric names
equal the names in daemon/src/*.cc, and every family the running daemon exports is documented;
the documented model JSON fields equal what the running daemon returns.
"""
import argparse
import ctypes
import glob
import json
import os
import re
import shlex
import signal
import subprocess
import sys
import tempfile
import time
import urllib.request

COMMAND_TIMEOUT = 180
FENCE = re.compile(r"^```(.*)$")


def die_with_parent():
    """In the daemon's child process: SIGTERM when this test dies (e.g. killed by a timeout)."""
    pr_set_pdeathsig = 1
    ctypes.CDLL("libc.so.6", use_errno=True).prctl(pr_set_pdeathsig, signal.SIGTERM)


class Block:
    def __init__(self, line, info, text):
        self.line = line
        words = info.split()
        self.lang = words[0] if words else ""
        self.markers = [w for w in words[1:] if "=" not in w]
        self.attrs = dict(w.split("=", 1) for w in words[1:] if "=" in w)
        self.text = text

    def marker(self):
        return self.markers[0] if self.markers else ""


def parse_blocks(text):
    blocks, lines, i = [], text.split("\n"), 0
    while i < len(lines):
        match = FENCE.match(lines[i])
        if not match:
            i += 1
            continue
        start, info, body = i + 1, match.group(1).strip(), []
        i += 1
        while i < len(lines) and not lines[i].startswith("```"):
            body.append(lines[i])
            i += 1
        blocks.append(Block(start, info, "\n".join(body) + "\n"))
        i += 1
    return blocks


def section(text, heading):
    """The text under a '## heading' (up to the next '## ')."""
    match = re.search(r"^## " + re.escape(heading) + r"\s*$(.*?)(?=^## |\Z)", text,
                      re.MULTILINE | re.DOTALL)
    return match.group(1) if match else ""


def table_first_cells(text):
    """Backticked contents of the first cell of every table row."""
    cells = []
    for line in text.splitlines():
        match = re.match(r"^\|\s*`([^`]+)`", line)
        if match:
            cells.append(match.group(1))
    return cells


class Session:
    def __init__(self, args, directory):
        self.args = args
        self.dir = directory
        self.failures = []
        self.checks = 0
        self.last = None  # (block, stdout, stderr) of the last readme-run block
        self.daemon = None
        self.ready = None
        self.ports = {}  # "127.0.0.1:7070" -> "127.0.0.1:41234"
        self.env = dict(os.environ)
        self.env["PATH"] = args.bin_dir + os.pathsep + self.env.get("PATH", "")
        self.env.pop("CI", None)
        os.symlink(os.path.join(args.source_dir, "config"), os.path.join(directory, "config"))

    def fail(self, block, message):
        where = f"README.md:{block.line}" if block else "README.md"
        self.failures.append(f"{where}: {message}")

    def check(self, ok, block, message):
        self.checks += 1
        if not ok:
            self.fail(block, message)
        return ok

    def substitute(self, text):
        for default, real in self.ports.items():
            text = text.replace(default, real)
        return text

    def run(self, command, timeout=COMMAND_TIMEOUT):
        return subprocess.run(["bash", "-euo", "pipefail", "-c", command], cwd=self.dir,
                              env=self.env, capture_output=True, text=True, timeout=timeout,
                              stdin=subprocess.DEVNULL)

    def write(self, block):
        name = block.attrs.get("file")
        if not self.check(bool(name), block, "a file= attribute is required"):
            return None
        with open(os.path.join(self.dir, name), "w") as out:
            out.write(block.text)
        return name

    # --- block kinds -------------------------------------------------------------------------

    def do_run(self, block):
        command = self.substitute(block.text)
        try:
            done = self.run(command)
        except subprocess.TimeoutExpired:
            self.fail(block, f"timed out after {COMMAND_TIMEOUT} s:\n{command}")
            self.last = (block, "", "")
            return
        self.check(done.returncode == 0, block,
                   f"exit {done.returncode}:\n{command}\nstdout:\n{done.stdout}\nstderr:\n"
                   f"{done.stderr}")
        self.last = (block, done.stdout, done.stderr)

    def do_output(self, block, stream):
        if not self.check(self.last is not None, block, "no readme-run block before it"):
            return
        got = self.last[1] if stream == "stdout" else self.last[2]
        self.check(got == block.text, block,
                   f"the {stream} of the block at line {self.last[0].line} differs from the "
                   f"README:\n--- README\n{block.text}--- actual\n{got}")

    def do_config(self, block):
        name = self.write(block)
        if name:
            done = self.run(f"codedriftd --check-config --config {shlex.quote(name)}")
            self.check(done.returncode == 0, block,
                       f"codedriftd --check-config rejects it:\n{done.stderr}{done.stdout}")

    def do_table(self, block):
        name = self.write(block)
        if name:
            done = self.run(f"codedrift check {shlex.quote(name)}")
            self.check(done.returncode == 0, block, f"codedrift check rejects it:\n{done.stderr}")

    def do_scenario(self, block):
        name = self.write(block)
        if name:
            done = self.run(f"codedrift synth {shlex.quote(name)} --list")
            self.check(done.returncode == 0, block, f"codedrift synth rejects it:\n{done.stderr}")

    def do_default_config(self, block):
        path = os.path.join(self.args.source_dir, "lib/src/daemon_config_default.cc")
        source = open(path).read()
        match = re.search(r'R"yaml\((.*?)\)yaml"', source, re.DOTALL)
        if self.check(match is not None, block, f"no raw yaml string in {path}"):
            self.check(match.group(1) == block.text, block,
                       "differs from the embedded default config in "
                       f"lib/src/daemon_config_default.cc:\n{match.group(1)}")
        block.attrs["file"] = "embedded-default.yaml"
        self.do_config(block)

    def do_daemon(self, block):
        lines = [l for l in block.text.splitlines() if l.strip() and not l.startswith("#")]
        words = shlex.split(lines[0]) if len(lines) == 1 else []
        if not self.check(len(words) == 3 and words[0] == "codedriftd" and words[1] == "--config",
                          block, "expected exactly one line: codedriftd --config FILE"):
            return
        config_name = words[2]
        config_text = open(os.path.join(self.dir, config_name)).read()
        listen = re.findall(r"127\.0\.0\.1:(\d+)", config_text)
        test_config = config_name + ".readme-test.yaml"
        with open(os.path.join(self.dir, test_config), "w") as out:
            out.write(re.sub(r"127\.0\.0\.1:\d+", "127.0.0.1:0", config_text))
        ready = os.path.join(self.dir, "readme-test.ready.json")
        self.daemon_log = open(os.path.join(self.dir, "readme-test.codedriftd.log"), "w")
        self.daemon = subprocess.Popen(
            [os.path.join(self.args.bin_dir, "codedriftd"), "--config", test_config,
             "--ready-file", ready], cwd=self.dir, env=self.env, stdout=self.daemon_log,
            stderr=subprocess.STDOUT, stdin=subprocess.DEVNULL, preexec_fn=die_with_parent)
        deadline = time.monotonic() + 30
        while not os.path.exists(ready) and self.daemon.poll() is None:
            if time.monotonic() > deadline:
                break
            time.sleep(0.05)
        if not self.check(os.path.exists(ready), block, "codedriftd did not become ready:\n" +
                          open(self.daemon_log.name).read()):
            return
        self.ready = json.load(open(ready))
        # The config's addresses in order: http first in our examples, then each stream's.
        names = re.findall(r"^\s*-\s*name:\s*(\S+)\s*\n\s*listen:\s*\w+://127\.0\.0\.1:(\d+)",
                           config_text, re.MULTILINE)
        http_port = re.search(r"listen:\s*127\.0\.0\.1:(\d+)", config_text)
        if http_port:
            self.ports["127.0.0.1:" + http_port.group(1)] = f"127.0.0.1:{self.ready['http_port']}"
        for stream, port in names:
            real = self.ready["streams"].get(stream)
            if self.check(real is not None, block, f"stream {stream} not in the ready file"):
                self.ports["127.0.0.1:" + port] = f"127.0.0.1:{real}"
        self.check(len(self.ports) == len(set(listen)), block,
                   f"could not map every address of {config_name} to a bound port")

    def stop_daemon(self):
        if not self.daemon:
            return
        self.daemon.send_signal(signal.SIGTERM)
        try:
            code = self.daemon.wait(timeout=30)
        except subprocess.TimeoutExpired:
            self.daemon.kill()
            code = self.daemon.wait()
        self.check(code == 0, None, f"codedriftd exited with {code} on SIGTERM:\n" +
                   open(self.daemon_log.name).read()[-3000:])
        self.daemon = None

    # --- the walk ----------------------------------------------------------------------------

    def walk(self, blocks):
        handlers = {
            "readme-run": self.do_run,
            "readme-daemon": self.do_daemon,
            "readme-output": lambda b: self.do_output(b, "stdout"),
            "readme-stderr": lambda b: self.do_output(b, "stderr"),
            "readme-config": self.do_config,
            "readme-table": self.do_table,
            "readme-scenario": self.do_scenario,
            "readme-default-config": self.do_default_config,
        }
        for block in blocks:
            marker = block.marker()
            if marker == "readme-skip":
                lines = [l for l in block.text.splitlines() if l.strip()]
                self.check(all(re.fullmatch(r"make (demo|test)( KEEP=1)?( +#.*)?", l)
                               for l in lines), block,
                           "readme-skip is only for `make demo` and `make test`")
                continue
            if marker == "readme-figure":
                self.check(block.lang == "text", block, "readme-figure is for text blocks")
                continue
            handler = handlers.get(marker)
            if self.check(handler is not None, block,
                          f"```{block.lang} block without a known readme- marker: every "
                          "example must be tested (see tests/readme/readme_test.py)"):
                handler(block)


# --- reference checks ------------------------------------------------------------------------

def config_keys_in_source(source_dir):
    keys = set()
    for path in glob.glob(os.path.join(source_dir, "lib/src/daemon_config*.cc")):
        text = open(path).read()
        for body in re.findall(r"k\w*Keys\s*=\s*\{(.*?)\};", text, re.DOTALL):
            keys.update(re.findall(r'"([a-z_]+)"', body))
    return keys


def check_config_reference(session, readme, source_dir):
    documented = {cell.split(".")[-1].replace("[]", "")
                  for cell in table_first_cells(section(readme, "Configuration reference"))}
    accepted = config_keys_in_source(source_dir)
    session.check(bool(accepted), None, "found no k*Keys arrays in lib/src/daemon_config*.cc")
    session.check(documented == accepted, None,
                  "configuration reference vs the config reader's keys: undocumented "
                  f"{sorted(accepted - documented)}, not accepted {sorted(documented - accepted)}")


def help_options(session, command):
    done = session.run(command + " --help")
    options = set(re.findall(r"^\s+(?:-\w,)?(--[a-z][a-z0-9-]*)", done.stdout, re.MULTILINE))
    options.discard("--help")
    return options


def check_cli_reference(session, readme):
    text = section(readme, "CLI reference")
    parts = re.split(r"^### `([^`]+)`\s*$", text, flags=re.MULTILINE)
    documented = {parts[i]: set(re.findall(r"(?<![\w-])(--[a-z][a-z0-9-]*)", parts[i + 1]))
                  for i in range(1, len(parts), 2)}
    listing = session.run("codedrift --help").stdout
    subcommands = re.findall(r"^  ([a-z]+)\s{2,}", listing.split("Subcommands:")[-1],
                             re.MULTILINE)
    expected = {"codedriftd", "codedrift"} | {f"codedrift {s}" for s in subcommands}
    session.check(set(documented) == expected, None,
                  f"CLI reference headings {sorted(documented)} vs the commands {sorted(expected)}")
    for command, options in documented.items():
        actual = help_options(session, command)
        session.check(options == actual, None,
                      f"CLI reference for `{command}`: undocumented {sorted(actual - options)}, "
                      f"not in --help {sorted(options - actual)}")


def check_routes(session, readme, source_dir):
    routes_cc = open(os.path.join(source_dir, "daemon/src/routes.cc")).read()
    actual = {f"{m} {p}" for m, p in re.findall(r'Add\(\s*"([A-Z]+)",\s*"([^"]+)"', routes_cc)}
    documented = {c for c in table_first_cells(section(readme, "HTTP API"))
                  if re.match(r"^(GET|POST|PUT|DELETE) /", c)}
    session.check(documented == actual, None,
                  f"HTTP routes: undocumented {sorted(actual - documented)}, "
                  f"not served {sorted(documented - actual)}")


def metric_names_in_source(source_dir):
    names = set()
    for path in glob.glob(os.path.join(source_dir, "daemon/src/*.cc")):
        names.update(re.findall(r'"(codedrift_[a-z_]+)"', open(path).read()))
    return names


def check_metrics(session, readme, source_dir):
    documented = {c.split("{")[0] for c in table_first_cells(section(readme, "Metrics"))
                  if c.startswith("codedrift_")}
    in_source = metric_names_in_source(source_dir)
    session.check(documented == in_source, None,
                  f"metrics: undocumented {sorted(in_source - documented)}, "
                  f"not in daemon/src {sorted(documented - in_source)}")
    if session.ready:
        port = session.ready["http_port"]
        text = urllib.request.urlopen(f"http://127.0.0.1:{port}/metrics", timeout=10).read()
        exported = set(re.findall(r"^# TYPE (\S+)", text.decode(), re.MULTILINE))
        session.check(exported and exported <= documented, None,
                      f"exported but undocumented metrics: {sorted(exported - documented)}")


def json_paths(value, prefix=""):
    paths = set()
    if isinstance(value, dict):
        for key, inner in value.items():
            paths.add(prefix + key)
            if isinstance(inner, dict):
                paths |= json_paths(inner, prefix + key + ".")
            elif isinstance(inner, list) and inner and isinstance(inner[0], dict):
                paths |= json_paths(inner[0], prefix + key + "[].")
    return paths


def check_model_json(session, readme):
    if not session.ready:
        session.fail(None, "no daemon ran: the model JSON fields could not be checked")
        return
    documented = {c for c in table_first_cells(section(readme, "HTTP API"))
                  if not re.match(r"^(GET|POST) ", c)}
    port = session.ready["http_port"]
    models = json.load(urllib.request.urlopen(f"http://127.0.0.1:{port}/api/v1/models",
                                              timeout=10))["models"]
    actual = set()
    for model in models:
        one = json.load(urllib.request.urlopen(
            f"http://127.0.0.1:{port}/api/v1/models/{model['stream']}/{model['model']}",
            timeout=10))
        actual |= json_paths(one)
    session.check(documented == actual, None,
                  f"model JSON fields: undocumented {sorted(actual - documented)}, "
                  f"not returned {sorted(documented - actual)}")


def main():
    parser = argparse.ArgumentParser(description="README.md examples and references")
    parser.add_argument("--bin-dir", required=True, help="where codedrift and codedriftd are")
    parser.add_argument("--source-dir", required=True)
    parser.add_argument("--keep", action="store_true", help="keep the session directory")
    args = parser.parse_args()
    args.bin_dir = os.path.abspath(args.bin_dir)
    args.source_dir = os.path.abspath(args.source_dir)
    readme = open(os.path.join(args.source_dir, "README.md")).read()
    blocks = parse_blocks(readme)

    directory = tempfile.mkdtemp(prefix="codedrift-readme-")
    session = Session(args, directory)
    try:
        session.walk(blocks)
        check_config_reference(session, readme, args.source_dir)
        check_cli_reference(session, readme)
        check_routes(session, readme, args.source_dir)
        check_metrics(session, readme, args.source_dir)
        check_model_json(session, readme)
    finally:
        session.stop_daemon()
        if args.keep:
            print(f"session directory kept: {directory}")
        else:
            subprocess.run(["rm", "-rf", directory], check=False)
    ran = sum(1 for b in blocks if b.marker() == "readme-run")
    for failure in session.failures:
        print("FAIL " + failure + "\n")
    print(f"README.md: {len(blocks)} blocks ({ran} run), {session.checks} checks, "
          f"{len(session.failures)} failed")
    return 1 if session.failures else 0


if __name__ == "__main__":
    sys.exit(main())
