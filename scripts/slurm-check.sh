#!/usr/bin/env bash
# A real scheduler for the job-array script of docs/datasets.md ("Slurm job array"): a
# single-node Slurm from Debian's slurm-wlm (with munge) is started by hand on localhost
# (no systemd: munged, slurmctld and slurmd run from a scratch folder with a generated
# slurm.conf, 2 CPUs), the script is submitted with sbatch as written (its /shared folder
# replaced by the scratch folder), the 8 parts are merged as the docs say, and the result is
# compared with an unsharded run: the .npy variant of the same script byte for byte (the .npy
# and its side file), the .h5 of the script as written array by array and attribute by
# attribute (h5py; HDF5 files of different write orders differ in their layout bytes).
#
# Exit codes: 0 passed, 1 failed, 77 skipped (the packages cannot be installed or the daemons
# refuse to run here: the reason is printed on a line "SKIP: ..."). .ci/run counts 77 as a skip.
# The daemons are stopped (by their process ids) on every exit.
set -uo pipefail
ROOT="$(cd "$(dirname "$0")/.." && pwd)"
PATHWEAVE="$ROOT/packages/io/bin/pathweave.js"
skip() {
  echo "SKIP: $*"
  exit 77
}
fail() {
  echo "FAIL: $*"
  exit 1
}

# 1. The packages: installed when missing (root and Debian's apt only).
if ! command -v slurmctld >/dev/null || ! command -v slurmd >/dev/null || ! command -v munged >/dev/null || ! command -v sbatch >/dev/null; then
  if [ "$(id -u)" != 0 ] || ! command -v apt-get >/dev/null; then skip "slurm-wlm and munge are not installed and this is not a root Debian system"; fi
  echo "installing slurm-wlm munge"
  out="$( { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq slurm-wlm munge; } 2>&1)" ||
    skip "apt-get install slurm-wlm munge failed: $(echo "$out" | tail -3 | tr '\n' ' ')"
fi
[ -f "$PATHWEAVE" ] && [ -f "$ROOT/packages/io/dist/cli/main.js" ] || fail "build first (npx tsc -b): $PATHWEAVE or its dist/ is missing"

D="$(mktemp -d /tmp/pathweave-slurm-XXXXXX)"
chmod 755 "$D"
pids=()
cleanup() {
  for p in "${pids[@]}"; do kill "$p" 2>/dev/null; done
  sleep 1
  for p in "${pids[@]}"; do kill -9 "$p" 2>/dev/null; done
  [ "${KEEP:-0}" = 1 ] || rm -rf "$D"
}
trap cleanup EXIT

# 2. munge: a key of its own, a socket in the scratch folder.
mkdir -p "$D/munge" "$D/spool" "$D/state" "$D/log" "$D/shared"
chmod 700 "$D/munge"
mungekey --create --keyfile="$D/munge/munge.key" 2>"$D/log/mungekey.err" || skip "mungekey: $(cat "$D/log/mungekey.err")"
munged --force --socket="$D/munge/munge.socket" --key-file="$D/munge/munge.key" --pid-file="$D/munge/munged.pid" \
  --log-file="$D/log/munged.log" --seed-file="$D/munge/munged.seed" 2>"$D/log/munged.err" ||
  skip "munged refused to start: $(cat "$D/log/munged.err" "$D/log/munged.log" 2>/dev/null | tail -3 | tr '\n' ' ')"
for _ in $(seq 50); do [ -s "$D/munge/munged.pid" ] && break; sleep 0.1; done
pids+=("$(cat "$D/munge/munged.pid")")

# 3. slurm.conf for this host: one node of 2 CPUs, no cgroups (a container), no accounting.
host="$(hostname -s)"
mem=$(($(awk '/MemTotal/ {print $2}' /proc/meminfo) / 1024 / 2))
cat >"$D/slurm.conf" <<EOF
ClusterName=pathweave-check
SlurmctldHost=$host
SlurmctldPort=16817
SlurmdPort=16818
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$D/munge/munge.socket
StateSaveLocation=$D/state
SlurmdSpoolDir=$D/spool
SlurmctldPidFile=$D/slurmctld.pid
SlurmdPidFile=$D/slurmd.pid
SlurmctldLogFile=$D/log/slurmctld.log
SlurmdLogFile=$D/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU_Memory
MpiDefault=none
ReturnToService=2
SchedulerType=sched/builtin
NodeName=$host CPUs=2 RealMemory=$mem State=UNKNOWN
PartitionName=check Nodes=$host Default=YES MaxTime=INFINITE State=UP
EOF
export SLURM_CONF="$D/slurm.conf"
slurmctld -f "$SLURM_CONF" 2>"$D/log/slurmctld.err" || skip "slurmctld refused to start: $(cat "$D/log/slurmctld.err" | tail -3 | tr '\n' ' ')"
for _ in $(seq 50); do [ -s "$D/slurmctld.pid" ] && break; sleep 0.1; done
[ -s "$D/slurmctld.pid" ] && pids+=("$(cat "$D/slurmctld.pid")")
slurmd -f "$SLURM_CONF" 2>"$D/log/slurmd.err" || skip "slurmd refused to start: $(cat "$D/log/slurmd.err" | tail -3 | tr '\n' ' ')"
for _ in $(seq 50); do [ -s "$D/slurmd.pid" ] && break; sleep 0.1; done
[ -s "$D/slurmd.pid" ] && pids+=("$(cat "$D/slurmd.pid")")
idle=0
for _ in $(seq 100); do
  if sinfo -h -o '%T' 2>/dev/null | grep -q idle; then idle=1; break; fi
  sleep 0.3
done
[ $idle = 1 ] || skip "the node never became idle: $(sinfo 2>&1 | tail -2 | tr '\n' ' '); slurmctld: $(tail -3 "$D/log/slurmctld.log" 2>/dev/null | tr '\n' ' '); slurmd: $(tail -3 "$D/log/slurmd.log" 2>/dev/null | tr '\n' ' ')"
echo "slurm $(sinfo -V) on $host: node idle"

# 4. The submit folder: the scenario and `npx --no-install pathweave` resolving to this checkout.
work="$D/work"
mkdir -p "$work/node_modules/.bin"
ln -s "$PATHWEAVE" "$work/node_modules/.bin/pathweave"
cp "$ROOT/examples/street-corner-28ghz.json" "$work/scenario.json"
# The job script exactly as docs/datasets.md gives it, with /shared moved to the scratch folder.
awk '/^### Slurm job array/ {f = 1} f && /^```bash/ {g = 1; next} g && /^```/ {exit} g {print}' "$ROOT/docs/datasets.md" >"$D/job.docs.sh"
grep -q '^#SBATCH --array=0-7' "$D/job.docs.sh" || fail "no job script with #SBATCH --array=0-7 under \"### Slurm job array\" in docs/datasets.md"
merge_line="$(awk '/^### Slurm job array/ {f = 1} f && /pathweave merge/ {print; exit}' "$ROOT/docs/datasets.md")"
[ -n "$merge_line" ] || fail "no merge command after the job script in docs/datasets.md"

status=0
for ext in npy h5; do
  sed -e "s#/shared/#$D/shared/#g" -e "s#\\.h5 #.$ext #g" "$D/job.docs.sh" >"$D/job.$ext.sh"
  job=$(cd "$work" && sbatch --parsable --output="$D/log/task-$ext-%a.out" "$D/job.$ext.sh") || fail "sbatch refused the job script: $job"
  echo "submitted the array job $job (.$ext, tasks 0-7)"
  for _ in $(seq 1200); do
    [ -z "$(squeue -h -j "$job" 2>/dev/null)" ] && break
    sleep 0.5
  done
  [ -z "$(squeue -h -j "$job" 2>/dev/null)" ] || fail "the array job $job did not finish in 10 minutes: $(squeue -j "$job" 2>&1 | tr '\n' ' ')"
  parts=("$D"/shared/run.part-*-of-8.$ext)
  [ ${#parts[@]} = 8 ] || fail "the array job wrote ${#parts[@]} parts, not 8: $(cat "$D"/log/task-$ext-*.out | tail -5)"
  for i in 0 1 2 3 4 5 6 7; do
    [ -f "$D/shared/run.part-$i-of-8.$ext.manifest.json" ] || fail "part $i has no manifest: $(cat "$D/log/task-$ext-$i.out")"
  done
  # The docs' merge command, in the submit folder.
  merge_cmd="$(echo "$merge_line" | sed -e "s#/shared/#$D/shared/#g" -e "s#\\.h5#.$ext#g")"
  (cd "$work" && eval "$merge_cmd --quiet") || fail "merge of the .$ext parts failed"
  (cd "$work" && node "$PATHWEAVE" generate scenario.json --out "$D/full.$ext" --checksum --quiet) || fail "the unsharded .$ext run failed"
  if [ $ext = npy ]; then
    if cmp "$D/shared/run.npy" "$D/full.npy" && cmp "$D/shared/run.npy.json" "$D/full.npy.json"; then
      echo "ok: the 8 parts of the Slurm array job merge to the unsharded .npy and side file byte for byte ($(stat -c %s "$D/full.npy") + $(stat -c %s "$D/full.npy.json") bytes)"
    else
      echo "not ok: the merged .npy (or its side file) differs from the unsharded run"
      status=1
    fi
  elif /usr/bin/python3 -c 'import h5py' 2>/dev/null; then
    if /usr/bin/python3 - "$D/shared/run.h5" "$D/full.h5" <<'EOF'; then
import sys, h5py, numpy as np
a, b = h5py.File(sys.argv[1], "r"), h5py.File(sys.argv[2], "r")
names = []
a.visit(lambda n: names.append(n) if isinstance(a[n], h5py.Dataset) else None)
other = []
b.visit(lambda n: other.append(n) if isinstance(b[n], h5py.Dataset) else None)
bad = [n for n in names if not np.array_equal(a[n][()], b[n][()])] + sorted(set(names) ^ set(other))
attrs = sorted(set(a.attrs) | set(b.attrs))
bad += [k for k in attrs if k not in a.attrs or k not in b.attrs or str(a.attrs[k]) != str(b.attrs[k])]
print(f"{len(names)} arrays and {len(attrs)} attributes compared; differing: {bad}")
sys.exit(1 if bad else 0)
EOF
      echo "ok: the merged .h5 of the Slurm array job equals the unsharded run, every array and attribute (h5py)"
    else
      echo "not ok: the merged .h5 differs from the unsharded run"
      status=1
    fi
  else
    echo "note: no h5py for /usr/bin/python3: the .h5 merge was checked by its exit code only"
  fi
done
exit $status
