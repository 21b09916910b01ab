#!/usr/bin/env bash
# run.sh - speed of distributed runs (make bench, when mpirun and the
# gateway sluice.kernel.mpi are there), as ratios to one rank on 1, 2, ...
# ranks up to the cores:
# - a sweep: strong scaling (32 filter runs) and weak scaling (16 runs a
#   rank), and the share of the rank-seconds spent outside the filter
#   runs (gathering, writing, waiting for the round's slowest rank);
# - one GR4J particle filter split across the ranks: strong scaling at
#   1e5 and 1e6 members, weak scaling (5e4 members a rank), and the
#   share of the wall time the busiest rank spent in the filter's
#   collectives (waiting for the others included) with the bytes it
#   received;
# - one ensemble Kalman filter on Lorenz-96 split across the ranks by
#   members, each rank analysing its rows of every member (the LETKF:
#   the rows of its grid points): the LETKF with 4000 states and the ETKF
#   with 20000, strong scaling, with the same shares.
set -u
here=$(cd "$(dirname "$0")/../../.." && pwd)
if ! command -v mpirun >/dev/null || [ ! -e "$here/m/+sluice/+kernel/mpi.mex" ]; then
  echo "   skipped: needs mpirun and sluice.kernel.mpi (make MPI=1)"; exit 0
fi
export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
export OMPI_MCA_btl=self,vader OMPI_MCA_btl_vader_single_copy_mechanism=none
cores=$(nproc)
ranks=(1); p=2; while [ $p -le "$cores" ]; do ranks+=($p); p=$((p * 2)); done
run() { # ranks points -> "seconds fun"
  (cd "$(mktemp -d)" && SLUICE_BENCH_POINTS=$2 mpirun -np "$1" octave-cli --no-gui --quiet \
     --no-history --norc "$here/tests/bench/mpi/sweep_scaling.m" 2>/dev/null) \
    | awk '/^points/ {print $6, $8}'
}
echo "   sweep of particle-filter runs (20000 members, 200 cycles, 1 thread), $cores cores"
for mode in strong weak; do
  echo "   $mode scaling: ranks, points, seconds, speed-up (weak: efficiency), outside the runs"
  base=
  for P in "${ranks[@]}"; do
    if [ $mode = strong ]; then n=32; else n=$((16 * P)); fi
    read -r s f < <(run "$P" "$n")
    [ -z "${s:-}" ] && { echo "   $P ranks: did not complete"; continue; }
    [ -z "$base" ] && base=$s
    awk -v P="$P" -v n="$n" -v s="$s" -v f="$f" -v b="$base" 'BEGIN {
      r = b / s;   # strong: the speed-up; weak (work per rank fixed): the efficiency
      printf "   %5d %6d %8.2f %8.2f %7.1f%%\n", P, n, s, r, 100 * (s * P - f) / (s * P) }'
  done
done

print_row() { # ranks seconds comm bytes base split -> one row of a split filter's table
  awk -v P="$1" -v s="$2" -v c="$3" -v b="$4" -v base="$5" -v sp="$6" 'BEGIN {
    printf "   %5d %8.2f %8.2f %7.1f%% %9.1f%s\n", P, s, base / s, 100 * c / s, b / 1e6,
           (sp == P) ? "" : "  (not split)" }'
}
pf() { # ranks members days -> "seconds comm bytes split"
  (cd "$(mktemp -d)" && SLUICE_BENCH_MEMBERS=$2 SLUICE_BENCH_DAYS=$3 mpirun -np "$1" \
     octave-cli --no-gui --quiet --no-history --norc "$here/tests/bench/mpi/pf_scaling.m" \
     2>/dev/null) | awk '/^members/ {print $6, $8, $10, $12}'
}
echo "   one GR4J particle filter split across the ranks (kernel move, daily flows, 1 thread a rank)"
for spec in "strong 100000 365" "strong 1000000 30" "weak 50000 365"; do
  read -r mode N days <<<"$spec"
  echo "   $mode scaling, $N members$([ $mode = weak ] && echo ' a rank'), $days days:" \
       "ranks, seconds, speed-up (weak: efficiency), in collectives, MB received"
  base=
  for P in "${ranks[@]}"; do
    n=$N; [ $mode = weak ] && n=$((N * P))
    read -r s c b sp < <(pf "$P" "$n" "$days")
    [ -z "${s:-}" ] && { echo "   $P ranks: did not complete"; continue; }
    [ -z "$base" ] && base=$s
    print_row "$P" "$s" "$c" "$b" "$base" "$sp"
  done
done

kal() { # ranks method states -> "seconds comm bytes split"
  (cd "$(mktemp -d)" && SLUICE_BENCH_METHOD=$2 SLUICE_BENCH_STATES=$3 mpirun -np "$1" \
     octave-cli --no-gui --quiet --no-history --norc "$here/tests/bench/mpi/kalman_scaling.m" \
     2>/dev/null) | awk '/^method/ {print $8, $10, $12, $14}'
}
echo "   one ensemble Kalman filter on Lorenz-96 split across the ranks (30 cycles, 1 thread a rank)"
for spec in "letkf 4000" "etkf 20000"; do
  read -r method n <<<"$spec"
  echo "   $method, $n states: ranks, seconds, speed-up, in collectives, MB received"
  base=
  for P in "${ranks[@]}"; do
    read -r s c b sp < <(kal "$P" "$method" "$n")
    [ -z "${s:-}" ] && { echo "   $P ranks: did not complete"; continue; }
    [ -z "$base" ] && base=$s
    print_row "$P" "$s" "$c" "$b" "$base" "$sp"
  done
done
