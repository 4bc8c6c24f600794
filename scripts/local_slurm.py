#!/usr/bin/env python3
"""A one-node Slurm cluster on this machine, for trying and testing campaigns on a real batch scheduler.

    python3 scripts/local_slurm.py up [--state DIR]     install if missing, configure, start, wait until idle
    python3 scripts/local_slurm.py down [--state DIR]   stop exactly the daemons 'up' started (by pid)
    python3 scripts/local_slurm.py status [--state DIR]

'up' prints the line ``export SLURM_CONF=...`` for the shell that will submit jobs. Everything lives in one
folder (default: a new temporary folder, recorded in /tmp/memory-infer-slurm.json): its own munge key and
socket, slurm.conf with the node's real cores and memory, state, spool, logs and pid files. Debian's
slurm-wlm and munge are installed with apt-get when missing (root only). Nothing outside the folder is
changed, and a munge or Slurm already running on the machine is left alone.
"""
from __future__ import annotations

import argparse
import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time

POINTER = "/tmp/memory-infer-slurm.json"
PACKAGES = ("slurm-wlm", "munge")
NEEDED = ("munged", "mungekey", "slurmctld", "slurmd", "sinfo", "sbatch")
CONTROLLER_PORT, NODE_PORT = 16817, 16818  # away from the defaults, so a system Slurm is not disturbed


def fail(sentence: str) -> None:
    print(f"local_slurm: {sentence}", file=sys.stderr)
    sys.exit(2)


def install_if_missing() -> None:
    missing = [name for name in NEEDED if shutil.which(name) is None]
    if not missing:
        return
    if os.geteuid() != 0 or shutil.which("apt-get") is None:
        fail(f"{', '.join(missing)} not found, and installing Debian's {' and '.join(PACKAGES)} needs root and "
             "apt-get; install them by hand or run this as root on Debian")
    # standard error: standard output is what `eval "$(local_slurm.py up)"` runs (.ci/run)
    print(f"local_slurm: installing {' and '.join(PACKAGES)} with apt-get", file=sys.stderr, flush=True)
    environment = dict(os.environ, DEBIAN_FRONTEND="noninteractive")
    for command in (["apt-get", "update", "-qq"],
                    ["apt-get", "install", "-y", "-qq", "--no-install-recommends", *PACKAGES]):
        done = subprocess.run(command, env=environment, capture_output=True, text=True)
        if done.returncode != 0:
            fail(f"'{' '.join(command)}' failed: {(done.stderr or done.stdout).strip().splitlines()[-1:]}")
    still = [name for name in NEEDED if shutil.which(name) is None]
    if still:
        fail(f"{', '.join(still)} still missing after installing {' and '.join(PACKAGES)}")


def node_resources():
    """(cores, memory in MB) of this machine, with 1 GB of memory left for the system."""
    cores = os.cpu_count() or 1
    with open("/proc/meminfo") as handle:
        total_kb = int(next(line for line in handle if line.startswith("MemTotal")).split()[1])
    return cores, max(512, total_kb // 1024 - 1024)


def write_configuration(folder: str) -> str:
    host = socket.gethostname().split(".")[0]
    cores, memory = node_resources()
    for name in ("state", "spool", "log"):
        os.makedirs(os.path.join(folder, name), exist_ok=True)
    text = f"""# one-node Slurm cluster written by memory_infer's scripts/local_slurm.py
ClusterName=memoryinfer
SlurmctldHost={host}
SlurmctldPort={CONTROLLER_PORT}
SlurmdPort={NODE_PORT}
AuthType=auth/munge
AuthInfo=socket={folder}/munge.socket
SlurmUser=root
SlurmdUser=root
StateSaveLocation={folder}/state
SlurmdSpoolDir={folder}/spool
SlurmctldPidFile={folder}/slurmctld.pid
SlurmdPidFile={folder}/slurmd.pid
SlurmctldLogFile={folder}/log/slurmctld.log
SlurmdLogFile={folder}/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core_Memory
SchedulerType=sched/backfill
MpiDefault=none
ReturnToService=2
JobCompType=jobcomp/none
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
SlurmctldTimeout=30
SlurmdTimeout=30
InactiveLimit=0
KillWait=5
MinJobAge=60
NodeName={host} CPUs={cores} RealMemory={memory} State=UNKNOWN
PartitionName=main Nodes={host} Default=YES MaxTime=INFINITE State=UP
"""
    path = os.path.join(folder, "slurm.conf")
    with open(path, "w") as handle:
        handle.write(text)
    return path


def start(command, log_path):
    log = open(log_path, "ab")
    return subprocess.Popen(command, stdout=log, stderr=subprocess.STDOUT, start_new_session=True).pid


def node_state(conf: str) -> str:
    done = subprocess.run(["sinfo", "-h", "-N", "-o", "%t"], env=dict(os.environ, SLURM_CONF=conf),
                          capture_output=True, text=True, timeout=20)
    return done.stdout.strip() if done.returncode == 0 else ""


def alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except OSError:
        return False
    return True


def up(folder: str | None) -> None:
    if os.path.exists(POINTER):
        state = json.load(open(POINTER))
        if all(alive(pid) for pid in state["pids"].values()):
            print(f"export SLURM_CONF={state['conf']}")
            return
        down()
    began = time.time()
    install_if_missing()
    folder = os.path.abspath(folder or tempfile.mkdtemp(prefix="memory-infer-slurm-"))
    os.makedirs(folder, exist_ok=True)
    os.chmod(folder, 0o700)
    key = os.path.join(folder, "munge.key")
    if not os.path.exists(key):
        done = subprocess.run(["mungekey", "--create", f"--keyfile={key}"], capture_output=True, text=True)
        if done.returncode != 0:
            fail(f"mungekey could not create a key: {done.stderr.strip()}")
    os.chmod(key, 0o600)
    conf = write_configuration(folder)
    pids = {}
    state = {"folder": folder, "conf": conf, "pids": pids}

    def save():
        with open(POINTER + ".tmp", "w") as handle:
            json.dump(state, handle)
        os.replace(POINTER + ".tmp", POINTER)

    pids["munged"] = start(["munged", "--foreground", "--force", f"--key-file={key}",
                            f"--socket={folder}/munge.socket", f"--pid-file={folder}/munged.pid",
                            f"--seed-file={folder}/munge.seed", f"--log-file={folder}/log/munged.log"],
                           os.path.join(folder, "log", "munged.out"))
    save()
    for _ in range(100):
        if os.path.exists(os.path.join(folder, "munge.socket")):
            break
        time.sleep(0.1)
    else:
        down()
        fail(f"munged did not start; see {folder}/log/munged.out")
    pids["slurmctld"] = start(["slurmctld", "-D", "-i", "-f", conf], os.path.join(folder, "log", "slurmctld.out"))
    save()
    time.sleep(1.0)
    pids["slurmd"] = start(["slurmd", "-D", "-f", conf], os.path.join(folder, "log", "slurmd.out"))
    save()
    deadline = time.time() + 90
    while time.time() < deadline:
        states = node_state(conf)
        if states and all(s.startswith("idle") for s in states.split()):
            print(f"local_slurm: one-node cluster idle after {time.time() - began:.1f} s "
                  f"({node_resources()[0]} cores); configuration {conf}", file=sys.stderr)
            print(f"export SLURM_CONF={conf}")
            return
        if not all(alive(pid) for pid in pids.values()):
            break
        time.sleep(0.5)
    down()
    fail(f"the node did not become idle within 90 s; logs are in {folder}/log")


def down() -> None:
    if not os.path.exists(POINTER):
        print("local_slurm: nothing to stop", file=sys.stderr)
        return
    state = json.load(open(POINTER))
    for name in ("slurmd", "slurmctld", "munged"):  # the reverse of the start order
        pid = state["pids"].get(name)
        if pid is None or not alive(pid):
            continue
        os.kill(pid, signal.SIGTERM)
        for _ in range(100):
            if not alive(pid):
                break
            time.sleep(0.1)
            try:
                os.waitpid(pid, os.WNOHANG)
            except ChildProcessError:
                pass
        else:
            os.kill(pid, signal.SIGKILL)
    os.remove(POINTER)
    print(f"local_slurm: stopped {', '.join(state['pids'])} (folder {state['folder']} kept for its logs)",
          file=sys.stderr)


def status() -> None:
    if not os.path.exists(POINTER):
        print("local_slurm: not running")
        return
    state = json.load(open(POINTER))
    running = ", ".join(f"{name} {'up' if alive(pid) else 'down'}" for name, pid in state["pids"].items())
    print(f"local_slurm: {running}; node {node_state(state['conf']) or 'unknown'}; SLURM_CONF={state['conf']}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("action", choices=("up", "down", "status"))
    parser.add_argument("--state", default=None, help="folder for the configuration, keys, logs (up only)")
    args = parser.parse_args()
    {"up": lambda: up(args.state), "down": down, "status": status}[args.action]()


if __name__ == "__main__":
    main()
