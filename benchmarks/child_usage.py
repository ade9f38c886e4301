"""Wall time, CPU time and peak RSS of one command in a fresh process (for the benchmark
scripts)."""
import subprocess
import sys

# The child runs under a fresh Python, so RUSAGE_CHILDREN holds it alone; its own output is
# discarded so it cannot mix with the figures.
_PROBE = ("import resource, subprocess, sys, time; t = time.perf_counter(); "
          "subprocess.run(sys.argv[1:], check=True, stdout=subprocess.DEVNULL); "
          "u = resource.getrusage(resource.RUSAGE_CHILDREN); "
          "print(time.perf_counter() - t, u.ru_utime + u.ru_stime, u.ru_maxrss)")


def measure(cmd):
    """(wall s, CPU s, peak RSS MiB) of `cmd`."""
    res = subprocess.run([sys.executable, "-c", _PROBE] + list(cmd), check=True,
                         capture_output=True, text=True)
    wall, cpu, rss_kib = res.stdout.split()
    return float(wall), float(cpu), int(rss_kib) / 1024.0
