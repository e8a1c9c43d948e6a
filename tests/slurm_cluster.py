#!/usr/bin/python3
"""The Slurm job-array script (scripts/slurm/nervegap-array.sbatch) on a
real single-node Slurm cluster started here: Debian's slurm-wlm and munge
on localhost, as root, with a minimal configuration under a temporary
folder (munged as user munge with a key made here; slurm.conf with
SlurmUser=root, proctrack/linuxproc, task/none, no accounting storage;
SLURM_CONF pointing at it). A 4-task array runs a manifest of 12 jobs;
then every task must have completed with exit code 0 and the shard of its
task id, gather must be complete, and every job file must equal a direct
`nervegap run` with the same parameters (h5py). The daemons are stopped by
their pid files at the end.

When the services cannot start (not root, packages missing, a daemon that
does not come up), the test says why and exits 77: skipped. The same flow
without Slurm (shards as separate processes) is tests/ref_batch.py.

Usage: slurm_cluster.py NERVEGAP SBATCH_SCRIPT
"""
import os
import pwd
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time

import h5py
import numpy as np
from batchlib import circle, nervegap, params_of, run_args, same_results
from checklib import expect, finish

NG, SCRIPT = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
SKIP = 77


def skip(why):
    print(f"SKIP: {why}")
    sys.exit(SKIP)


def free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def tail(path, n=15):
    try:
        with open(path) as f:
            return "".join(f.readlines()[-n:])
    except OSError:
        return "(no log)"


def stop(pid_file):
    """Stops the daemon of a pid file: SIGTERM, then SIGKILL after 10 s."""
    try:
        with open(pid_file) as f:
            pid = int(f.read().split()[0])
    except (OSError, ValueError, IndexError):
        return
    try:
        os.kill(pid, signal.SIGTERM)
        for _ in range(100):
            time.sleep(0.1)
            os.kill(pid, 0)
        os.kill(pid, signal.SIGKILL)
    except ProcessLookupError:
        pass


if os.geteuid() != 0:
    skip("the single-node cluster needs root (slurmd runs jobs as root here)")
for tool in ("munged", "slurmctld", "slurmd", "sbatch", "squeue", "scontrol", "sinfo", "runuser"):
    if shutil.which(tool) is None and not os.path.exists(f"/usr/sbin/{tool}"):
        skip(f"{tool} is not installed (scripts/deps.sh installs slurm-wlm and munge)")
try:
    pwd.getpwnam("munge")
except KeyError:
    skip("there is no user munge (the munge package creates it)")

tmp = tempfile.mkdtemp(prefix="ng-slurm-")
os.chmod(tmp, 0o755)  # munged (user munge) reaches its folder through it
pid_files = [os.path.join(tmp, "slurmd.pid"), os.path.join(tmp, "slurmctld.pid"),
             os.path.join(tmp, "munge", "munged.pid")]
try:
    # ---- munge, as user munge, with a key made here ----
    mdir = os.path.join(tmp, "munge")
    os.mkdir(mdir)
    os.chmod(mdir, 0o755)  # the socket must be reachable by every user
    key = os.path.join(mdir, "munge.key")
    with open(key, "wb") as f:
        f.write(os.urandom(1024))
    os.chmod(key, 0o400)
    munge = pwd.getpwnam("munge")
    for p in (mdir, key):
        os.chown(p, munge.pw_uid, munge.pw_gid)
    sock = os.path.join(mdir, "munge.socket")
    r = subprocess.run(["runuser", "-u", "munge", "--", "munged", f"--key-file={key}", f"--socket={sock}",
                        f"--pid-file={pid_files[2]}", f"--log-file={os.path.join(mdir, 'munged.log')}",
                        f"--seed-file={os.path.join(mdir, 'munged.seed')}"],
                       capture_output=True, text=True, timeout=30)
    if r.returncode != 0:
        skip(f"munged did not start: {r.stderr.strip()} {tail(os.path.join(mdir, 'munged.log'))}")

    # ---- slurm.conf ----
    host = socket.gethostname().split(".")[0]
    cpus = os.cpu_count() or 1
    with open("/proc/meminfo") as f:
        mem_mb = int(f.readline().split()[1]) // 1024
    for d in ("state", "spool", "work"):
        os.mkdir(os.path.join(tmp, d))
    conf = os.path.join(tmp, "slurm.conf")
    with open(conf, "w") as f:
        f.write(f"""ClusterName=ngtest
SlurmctldHost={host}(127.0.0.1)
SlurmctldPort={free_port()}
SlurmdPort={free_port()}
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket={sock}
CredType=cred/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
MpiDefault=none
SchedulerType=sched/builtin
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
JobCompType=jobcomp/none
StateSaveLocation={tmp}/state
SlurmdSpoolDir={tmp}/spool
SlurmctldPidFile={pid_files[1]}
SlurmdPidFile={pid_files[0]}
SlurmctldLogFile={tmp}/slurmctld.log
SlurmdLogFile={tmp}/slurmd.log
ReturnToService=2
MinJobAge=600
NodeName={host} NodeAddr=127.0.0.1 CPUs={cpus} RealMemory={mem_mb} State=UNKNOWN
PartitionName=ngtest Nodes={host} Default=YES MaxTime=INFINITE State=UP
""")
    env = dict(os.environ, SLURM_CONF=conf)
    for daemon, log in (("slurmctld", "slurmctld.log"), ("slurmd", "slurmd.log")):
        r = subprocess.run([daemon, "-f", conf] + (["-N", host] if daemon == "slurmd" else []),
                           capture_output=True, text=True, env=env, timeout=30)
        if r.returncode != 0:
            skip(f"{daemon} did not start: {r.stderr.strip()} {tail(os.path.join(tmp, log))}")
    state = ""
    for _ in range(60):
        r = subprocess.run(["sinfo", "-h", "-N", "-o", "%t"], capture_output=True, text=True, env=env)
        state = r.stdout.strip()
        if r.returncode == 0 and state == "idle":
            break
        time.sleep(0.5)
    if state != "idle":
        skip(f"the node did not become idle (sinfo: {state!r} {r.stderr.strip()}); "
             f"slurmctld: {tail(os.path.join(tmp, 'slurmctld.log'), 5)} slurmd: {tail(os.path.join(tmp, 'slurmd.log'), 5)}")

    # ---- a manifest of 12 jobs, a 4-task array ----
    work = os.path.join(tmp, "work")
    rng = np.random.default_rng(7)
    for name, n in (("ring_a", 28), ("ring_b", 34), ("ring_c", 30)):
        circle(rng, n, 0.08, os.path.join(work, name + ".csv"))
    with open(os.path.join(work, "manifest.txt"), "w") as f:
        f.write("input ring_a.csv ring_b.csv ring_c.csv\nradius knn:4 uniform\nlaw scaled shifted\n"
                "max-degree 1\nscale-limit 1.5\ngrid 16\n")
    rc, listing, err = nervegap(NG, "batch", os.path.join(work, "manifest.txt"), "--list")
    jobs = [line.split("\t", 1) for line in listing.splitlines()]
    expect("12 jobs", rc == 0 and len(jobs) == 12, err)
    # the script as it is; the command line only sizes the array for this
    # 2-core node and says where the binary and the manifest are
    r = subprocess.run(["sbatch", "--parsable", "--array=1-4", "--cpus-per-task=1", "--mem=200M",
                        f"--chdir={work}", f"--export=ALL,NERVEGAP={NG},MANIFEST=manifest.txt,OUT=results",
                        SCRIPT], capture_output=True, text=True, env=env, timeout=60)
    expect("sbatch accepted the array", r.returncode == 0, r.stderr)
    job_id = r.stdout.strip().split(";")[0]
    deadline = time.time() + 240
    while time.time() < deadline:
        q = subprocess.run(["squeue", "-h", "-j", job_id], capture_output=True, text=True, env=env)
        if q.returncode == 0 and q.stdout.strip() == "":
            break
        time.sleep(1)
    expect("the array finished within 4 minutes", time.time() < deadline)
    show = subprocess.run(["scontrol", "-o", "show", "job", job_id], capture_output=True, text=True, env=env).stdout
    tasks = [dict(kv.split("=", 1) for kv in line.split() if "=" in kv) for line in show.splitlines()]
    expect("4 array tasks", len(tasks) == 4, show)
    for t in tasks:
        tid = t.get("ArrayTaskId")
        expect(f"task {tid} completed with exit code 0", t.get("JobState") == "COMPLETED" and t.get("ExitCode") == "0:0",
               f"{t.get('JobState')} {t.get('ExitCode')}")
        log = os.path.join(work, f"nervegap-{job_id}_{tid}.log")
        expect(f"task {tid} ran shard {tid}/4 from the array",
               f"shard {tid}/4 (from the Slurm array task): 3 jobs: 3 done" in tail(log, 40), tail(log))

    # ---- gather, and every job against a direct run ----
    results = os.path.join(work, "results")
    rc, _, err = nervegap(NG, "gather", results, "-o", os.path.join(work, "all.h5"), "--table",
                          os.path.join(work, "all.csv"))
    expect("gather: 12 of 12 complete", rc == 0 and "12 of 12 jobs complete" in err, err)
    for jid, ptext in jobs:
        p = params_of(ptext)
        ref = os.path.join(tmp, f"direct-{jid}.h5")
        rc, _, err = nervegap(NG, *run_args(p, os.path.join(work, p["input"]), ref))
        expect(f"direct run of {jid}", rc == 0, err)
        with h5py.File(os.path.join(work, "all.h5")) as g, h5py.File(ref) as b:
            a = g["jobs"][jid]
            diff = same_results(a, b)
            expect(f"{jid}: the cluster's result equals a direct run", diff == "", diff)
            expect(f"{jid}: ran with 1 thread (SLURM_CPUS_PER_TASK)", a["provenance"].attrs["threads"] == 1)
finally:
    for pf in pid_files:
        stop(pf)
    shutil.rmtree(tmp, ignore_errors=True)
finish()
