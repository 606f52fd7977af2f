#!/usr/bin/env bash
# run.sh tests the README's Slurm recipe on a real one-node Slurm: it
# installs Debian's slurm-wlm and munge when missing (as root), starts a
# private munged, slurmctld and slurmd in the background (generated
# slurm.conf, own ports and munge socket, all under a temporary directory),
# extracts the two recipe blocks from README.md between their
# `slurm-recipe:*` markers and runs them verbatim (an 8-task array job of
# `plumb sweep` shards, then `plumb score` with --dependency=afterok) on a
# 12-run plan over testdata/iris.csv, waits with a time limit, checks every
# job completed, and compares the study with a single-process sweep of the
# same plan file for file, timings aside (internal/scripts/studydiff). The
# daemons it started are stopped by pid on success and on failure.
#
#   internal/scripts/slurm/run.sh
#
# Env: PLUMB_SLURM_WAIT (seconds to wait for the jobs, default 180);
# PLUMB_SLURM_KEEP=1 keeps the temporary directory (logs, study) and prints
# its path.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
export PATH="/usr/local/go/bin:$PATH"
limit="${PLUMB_SLURM_WAIT:-180}"
t_start=$(date +%s)

if ! command -v slurmctld >/dev/null || ! command -v slurmd >/dev/null || ! command -v sbatch >/dev/null || ! command -v munged >/dev/null; then
	if [ "$(id -u)" = 0 ]; then
		apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq slurm-wlm munge >/dev/null
	else
		echo "run.sh: Slurm missing; install Debian's slurm-wlm and munge packages" >&2
		exit 2
	fi
fi
if [ "$(id -u)" != 0 ]; then
	echo "run.sh: must run as root (slurmd starts jobs as their user; SlurmUser=root)" >&2
	exit 2
fi
t_ready=$(date +%s)

work="$(mktemp -d /tmp/plumb-slurm.XXXXXX)"
chmod 755 "$work"
pids=()       # daemons started here, in start order
jobs_sub=""   # job ids submitted here, for scancel on failure
ok=0
cleanup() {
	set +e
	if [ "$ok" != 1 ]; then
		[ -n "$jobs_sub" ] && scancel $jobs_sub 2>/dev/null && sleep 2
		for f in "$work"/log/*.log "$work"/submit/slurm-*.out; do
			[ -f "$f" ] || continue
			echo "--- $f (last lines)" >&2
			tail -n 15 "$f" >&2
		done
	fi
	# Stop the daemons by pid, last started first; SIGKILL after 10 s.
	for ((i = ${#pids[@]} - 1; i >= 0; i--)); do
		p="${pids[$i]}"
		kill -TERM "$p" 2>/dev/null || continue
		for _ in $(seq 1 100); do
			kill -0 "$p" 2>/dev/null || break
			sleep 0.1
		done
		kill -0 "$p" 2>/dev/null && kill -KILL "$p" 2>/dev/null
		wait "$p" 2>/dev/null
	done
	if [ "${PLUMB_SLURM_KEEP:-}" = 1 ]; then
		echo "run.sh: kept $work" >&2
	else
		rm -rf "$work"
	fi
}
trap cleanup EXIT
fail() { echo "run.sh: FAIL: $*" >&2; exit 1; }

# A free TCP port on the loopback interface, from a seed.
free_port() {
	local p=$1
	while (echo >"/dev/tcp/127.0.0.1/$p") 2>/dev/null; do p=$((p + 1)); done
	echo "$p"
}
ctld_port=$(free_port $((20000 + RANDOM % 20000)))
slurmd_port=$(free_port $((ctld_port + 1)))
node="$(hostname -s)"
mkdir -p "$work"/{munge,log,state,spool,bin,submit,shared/data,shared/plans,shared/studies}

# munge: a key and a daemon of our own, on our own socket.
mungekey -c -k "$work/munge/munge.key"
munged -F --force -S "$work/munge/munge.sock" --key-file="$work/munge/munge.key" \
	--log-file="$work/log/munged.log" --pid-file="$work/munge/munged.pid" \
	--seed-file="$work/munge/munged.seed" >"$work/log/munged.out" 2>&1 &
pids+=($!)
for _ in $(seq 1 50); do [ -S "$work/munge/munge.sock" ] && break; sleep 0.1; done
munge -S "$work/munge/munge.sock" -n | unmunge -S "$work/munge/munge.sock" >/dev/null || fail "munged does not answer"

export SLURM_CONF="$work/slurm.conf"
cat >"$SLURM_CONF" <<CONF
ClusterName=plumbtest
SlurmctldHost=$node(127.0.0.1)
SlurmctldPort=$ctld_port
SlurmdPort=$slurmd_port
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$work/munge/munge.sock
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/log/slurmctld.log
SlurmdLogFile=$work/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SchedulerType=sched/builtin
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
JobCompType=jobcomp/none
MpiDefault=none
MailProg=/bin/true
ReturnToService=2
MinJobAge=600
# The README's recipe asks 8 CPUs and 8 GB a task: the one node is declared
# bigger than this machine, which Slurm accepts with config_overrides.
SlurmdParameters=config_overrides
NodeName=$node NodeAddr=127.0.0.1 CPUs=16 RealMemory=16384 State=UNKNOWN
PartitionName=test Nodes=$node Default=YES MaxTime=INFINITE State=UP
CONF
slurmctld -D -i -f "$SLURM_CONF" >"$work/log/slurmctld.out" 2>&1 &
pids+=($!)
slurmd -D -N "$node" -f "$SLURM_CONF" >"$work/log/slurmd.out" 2>&1 &
pids+=($!)
state=""
for _ in $(seq 1 300); do
	state="$(sinfo -h -n "$node" -o %T 2>/dev/null || true)"
	[ "$state" = idle ] && break
	for p in "${pids[@]}"; do kill -0 "$p" 2>/dev/null || fail "daemon $p exited"; done
	sleep 0.1
done
[ "$state" = idle ] || fail "node $node not idle after 30 s (state: ${state:-none})"
t_up=$(date +%s)
echo "== one-node Slurm up: node $node $(sinfo -h -o '%c CPUs, partition %P') (munged, slurmctld, slurmd: pids ${pids[*]})"

# plumb, the data and the plan.
(cd "$root" && go build -o "$work/bin/" ./cmd/plumb ./internal/scripts/studydiff)
t_built=$(date +%s)
export PATH="$work/bin:$PATH"
head -n 1 "$root/testdata/iris.csv" | grep -qx 'id,species,sepal_length,sepal_width,petal_length,petal_width' ||
	fail "testdata/iris.csv header changed"
sed '1s/^id,species,/cell,type,/' "$root/testdata/iris.csv" >"$work/shared/data/iris.csv"
cat >"$work/shared/plans/iris.json" <<'PLAN'
{"perplexity": [5, 15], "init": ["pca", "random"], "seeds": 3, "iters": 250, "exaggeration_iters": 100}
PLAN
export PLUMB_DATA="$work/shared/data/iris.csv" PLUMB_PLAN="$work/shared/plans/iris.json" PLUMB_STUDY="$work/shared/studies/iris"

# The README's two blocks, verbatim.
block() { # marker -> the code between the fences after "<!-- slurm-recipe:MARKER begin"
	awk -v m="$1" '
		index($0, "<!-- slurm-recipe:" m " begin") == 1 { inside = 1; next }
		index($0, "<!-- slurm-recipe:" m " end") == 1 { inside = 0 }
		inside && /^```/ { fence = !fence; next }
		inside && fence { print }' "$root/README.md"
}
block sbatch >"$work/submit/sweep.sbatch"
block submit >"$work/submit/submit.sh"
grep -q '^#SBATCH --array=' "$work/submit/sweep.sbatch" || fail "no sbatch recipe between the slurm-recipe:sbatch markers in README.md"
grep -q 'dependency=afterok' "$work/submit/submit.sh" || fail "no submit recipe between the slurm-recipe:submit markers in README.md"
echo "== README recipe ($(wc -l <"$work/submit/sweep.sbatch") + $(wc -l <"$work/submit/submit.sh") lines)"
cat "$work/submit/submit.sh"
# Run the submit block as written, then report the array job's id it set.
{ cat "$work/submit/submit.sh"; echo 'echo "array job $jid"'; } >"$work/submit/submit-and-report.sh"
(cd "$work/submit" && bash -eu submit-and-report.sh) >"$work/submit/submit.out" 2>&1 || { cat "$work/submit/submit.out" >&2; fail "submitting the recipe failed"; }
cat "$work/submit/submit.out"
t_sub=$(date +%s)
array_id="$(sed -n 's/^array job \([0-9][0-9]*\)$/\1/p' "$work/submit/submit.out")"
score_id="$(sed -n 's/^Submitted batch job \([0-9][0-9]*\)$/\1/p' "$work/submit/submit.out")"
[ -n "$array_id" ] && [ -n "$score_id" ] || fail "no job ids in the submit output"
jobs_sub="$array_id $score_id"

# Wait, at most $limit seconds, for the scoring job to end.
jobstate() { scontrol -o show job "$1" 2>/dev/null | sed -n 's/.*JobState=\([A-Z_]*\).*/\1/p' | sort | uniq -c | tr '\n' ' '; }
deadline=$(($(date +%s) + limit))
while :; do
	ss="$(scontrol -o show job "$score_id" 2>/dev/null || true)"
	st="$(sed -n 's/.*JobState=\([A-Z_]*\).*/\1/p' <<<"$ss")"
	case "$st" in
	COMPLETED) break ;;
	FAILED | CANCELLED | TIMEOUT | NODE_FAIL | OUT_OF_MEMORY | BOOT_FAIL | DEADLINE) fail "scoring job $score_id: $st" ;;
	esac
	grep -q 'Reason=DependencyNeverSatisfied' <<<"$ss" && fail "scoring job $score_id: dependency never satisfied (array job: $(jobstate "$array_id"))"
	[ "$(date +%s)" -lt "$deadline" ] || fail "jobs not finished after $limit s (array: $(jobstate "$array_id"); score: $st)"
	sleep 1
done
t_done=$(date +%s)

echo "== jobs"
scontrol -o show job "$array_id" | sed -n 's/^JobId=\([0-9]*\) ArrayJobId=\([0-9]*\) ArrayTaskId=\([0-9-]*\) .*JobState=\([A-Z_]*\) .*ExitCode=\([0-9:]*\) .*NumCPUs=\([0-9]*\) .*/job \1 = array \2_\3: \4, exit \5, cpus \6/p' | sort -t_ -k2 -n >"$work/tasks.txt"
cat "$work/tasks.txt"
[ "$(grep -c ': COMPLETED, exit 0:0, cpus 8$' "$work/tasks.txt")" = 8 ] || fail "want 8 array tasks COMPLETED with exit 0:0 on 8 CPUs"
scontrol -o show job "$score_id" | sed -n 's/^JobId=\([0-9]*\) .*JobState=\([A-Z_]*\) .*ExitCode=\([0-9:]*\) .*/job \1 (plumb score, afterok): \2, exit \3/p'
echo "== array task logs (plumb's last line each)"
for f in "$work"/submit/slurm-"${array_id}"_*.out; do
	printf '%s: %s\n' "$(basename "$f")" "$(tail -n 1 "$f")"
done
printf '%s: %s\n' "slurm-$score_id.out" "$(tail -n 1 "$work/submit/slurm-$score_id.out")"

echo "== single-process sweep of the same plan, then the comparison"
plumb sweep --quiet --input "$PLUMB_DATA" --id-column cell --label-column type --plan "$PLUMB_PLAN" --out "$work/one"
studydiff "$work/one" "$PLUMB_STUDY" || fail "the Slurm study differs from a single-process sweep"
layouts=$(find "$PLUMB_STUDY/layouts" -name '*.parquet' | wc -l)
[ "$layouts" = 12 ] || fail "want 12 layouts in the Slurm study, got $layouts"
ok=1
t_end=$(date +%s)
echo "run.sh: OK: install check $((t_ready - t_start)) s, daemons up $((t_up - t_ready)) s, go build $((t_built - t_up)) s, jobs $((t_done - t_sub)) s, total $((t_end - t_start)) s"
