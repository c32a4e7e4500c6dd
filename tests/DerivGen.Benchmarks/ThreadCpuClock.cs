using System;
using System.Runtime.InteropServices;
using Perfolizer.Horology;

namespace DerivGen.Benchmarks;

/// <summary>
/// A BenchmarkDotNet clock that reads the calling thread's CPU time (Linux <c>clock_gettime(CLOCK_THREAD_CPUTIME_ID)</c>,
/// nanoseconds) instead of wall-clock time. On a machine whose cores are shared with other processes, wall-clock
/// iterations include the time the benchmark thread waited for a core, which varies from one iteration to the next
/// by more than the differences measured here; CPU time does not (cache and memory-bandwidth interference remain).
/// Used by the quick report, which runs in process, so the benchmark runs on the thread that reads the clock.
/// </summary>
internal sealed class ThreadCpuClock : IClock
{
    public static readonly ThreadCpuClock Instance = new();

    private const int ClockThreadCpuTimeId = 3;   // CLOCK_THREAD_CPUTIME_ID (Linux <time.h>)

    private ThreadCpuClock()
    {
    }

    public string Title => "thread CPU time";

    public bool IsAvailable => OperatingSystem.IsLinux() && RuntimeInformation.ProcessArchitecture is Architecture.X64 or Architecture.Arm64 && Probe();

    public Frequency Frequency => Frequency.GHz;

    public long GetTimestamp()
    {
        if (ClockGetTime(ClockThreadCpuTimeId, out TimeSpec ts) != 0)
        {
            throw new InvalidOperationException("clock_gettime(CLOCK_THREAD_CPUTIME_ID) failed.");
        }

        return (ts.Seconds * 1_000_000_000L) + ts.Nanoseconds;
    }

    private static bool Probe()
    {
        try
        {
            return ClockGetTime(ClockThreadCpuTimeId, out _) == 0;
        }
        catch (DllNotFoundException)
        {
            return false;
        }
        catch (EntryPointNotFoundException)
        {
            return false;
        }
    }

    [DllImport("libc", EntryPoint = "clock_gettime")]
    private static extern int ClockGetTime(int clockId, out TimeSpec value);

    /// <summary>struct timespec on 64-bit Linux.</summary>
    [StructLayout(LayoutKind.Sequential)]
    private struct TimeSpec
    {
        public long Seconds;
        public long Nanoseconds;
    }
}
