using System.Diagnostics;
using System.Globalization;
using System.Runtime.InteropServices;
using PathBench.Rendering;
using PathBench.Rendering.Accumulation;

namespace PathBench.Cli.Commands;

/// <summary>What a long render is asked to do besides its samples.</summary>
/// <param name="Target">The sample range to finish.</param>
/// <param name="Budget">Stop after whole passes once this much wall time is spent (null: no limit).</param>
/// <param name="AccumulationPath">Where the accumulation state goes (checkpoints and the final file); null: nowhere.</param>
/// <param name="CheckpointEvery">Least wall time between two checkpoints.</param>
/// <param name="Quiet">No progress lines.</param>
internal sealed record SessionPlan(SampleRange Target, TimeSpan? Budget, string? AccumulationPath, TimeSpan CheckpointEvery, bool Quiet);

/// <summary>How a long render ended.</summary>
/// <param name="Film">The sums of [Target.First, DoneEnd).</param>
/// <param name="Done">The samples held (from the target's start; resumed samples included).</param>
/// <param name="Rays">Rays traced in this process.</param>
/// <param name="WallSeconds">Wall time of this process's passes.</param>
/// <param name="Interrupted">A SIGINT or SIGTERM stopped it.</param>
/// <param name="Signal">Which signal stopped it ("SIGINT", "SIGTERM"), or null.</param>
/// <param name="Checkpoints">Checkpoints written, the final one included.</param>
/// <param name="CheckpointSeconds">Wall time spent writing them.</param>
internal sealed record SessionOutcome(Film Film, SampleRange Done, long Rays, double WallSeconds, bool Interrupted, int Checkpoints, double CheckpointSeconds, string? Signal = null);

/// <summary>
/// Renders a sample range in whole passes, so the film always holds a contiguous range
/// [first, done): between passes it writes checkpoints (atomically, see
/// <see cref="AccumulationFile"/>), checks the time budget and the stop signals, and prints
/// progress. Passes are sized to about a second from the measured rate; since the sums are exact,
/// the pass sizes (which depend on timing) never change a bit of the result.
/// </summary>
internal static class RenderSession
{
    /// <summary>Exit code after a SIGINT or SIGTERM: the samples in flight were finished, the checkpoint and the image of what is done written.</summary>
    public const int InterruptedExitCode = 3;

    /// <summary>Environment variable (milliseconds) that stalls each checkpoint write halfway, after printing a line; used by the kill test.</summary>
    public const string StallVariable = "PATHBENCH_TEST_CHECKPOINT_STALL_MS";

    /// <summary>Printed on stderr when a stalled checkpoint write is halfway through its temp file.</summary>
    public const string StallMarker = "pathbench: test: checkpoint write stalled";

    /// <summary>
    /// Printed on stderr (only when <see cref="StallVariable"/> is set) as the stop handler takes
    /// the first SIGINT or SIGTERM, so a test can wait for the signal to have landed instead of
    /// for a length of time.
    /// </summary>
    public const string SignalMarker = "pathbench: test: stop signal taken";

    /// <summary>
    /// Environment variable (any value) that makes the render, after its first pass, print
    /// <see cref="SignalWaitMarker"/> and wait for SIGINT or SIGTERM (at most a minute), so a test
    /// can signal a render that is certainly still running, whatever the machine's speed.
    /// </summary>
    public const string SignalWaitVariable = "PATHBENCH_TEST_WAIT_FOR_SIGNAL";

    /// <summary>Printed on stderr when the render waits for a signal (<see cref="SignalWaitVariable"/>).</summary>
    public const string SignalWaitMarker = "pathbench: test: waiting for a signal";

    private static readonly TimeSpan PassTarget = TimeSpan.FromSeconds(1);
    private static readonly TimeSpan RedirectedProgressEvery = TimeSpan.FromSeconds(10);

    public static SessionOutcome Run(CliIo io, RenderJob job, RenderIdentity identity, SessionPlan plan, Accumulation? resumed)
    {
        Film film = resumed?.Film ?? new Film(identity.Width, identity.Height);
        // Held to what the budget leaves after the render's estimate (a reference's, the larger).
        film.WideBytesLimit = FilmOutput.WideRoom(identity.Width, identity.Height, 1, reference: true);
        int done = resumed is null ? plan.Target.First : resumed.Ranges[0].End;
        Action? stall = StallHook(io);
        using var signals = new StopSignals(stall is null ? null : () => TestLine(io, SignalMarker));
        var clock = Stopwatch.StartNew();
        TimeSpan lastCheckpoint = TimeSpan.Zero, lastLine = TimeSpan.Zero;
        long rays = 0;
        int checkpoints = 0;
        double checkpointSeconds = 0;
        int pass = 1;
        double sppPerSecond = 0;
        int startedAt = done;
        bool consoleProgress = !plan.Quiet && (ReferenceEquals(io.Error, Console.Error) || (io.Error is BatchCommand.TeeWriter tee && ReferenceEquals(tee.First, Console.Error)));
        bool waitForSignal = Environment.GetEnvironmentVariable(SignalWaitVariable) is not null;

        void Checkpoint()
        {
            if (plan.AccumulationPath is null || done == plan.Target.First)
            {
                return;
            }

            var t = Stopwatch.StartNew();
            ImageIo.Guard(plan.AccumulationPath, () => AccumulationFile.Write(plan.AccumulationPath, new Accumulation(identity, [new SampleRange(plan.Target.First, done)], film), stall));
            checkpoints++;
            checkpointSeconds += t.Elapsed.TotalSeconds;
            lastCheckpoint = clock.Elapsed;
        }

        while (done < plan.Target.End && !signals.StopRequested && !(plan.Budget is { } b && clock.Elapsed >= b))
        {
            // Size the pass to about a second, and not past the next checkpoint or the budget's end.
            TimeSpan window = PassTarget;
            if (plan.AccumulationPath is not null)
            {
                window = Min(window, plan.CheckpointEvery - (clock.Elapsed - lastCheckpoint));
            }

            if (plan.Budget is { } budget)
            {
                window = Min(window, budget - clock.Elapsed);
            }

            if (sppPerSecond > 0)
            {
                pass = (int)Math.Clamp(sppPerSecond * window.TotalSeconds, 1, int.MaxValue);
            }

            int end = (int)Math.Min(plan.Target.End, (long)done + pass);
            var passJob = job with { FirstSample = done, EndSample = end };
            RenderResult r = Renderer.RenderInto(passJob, film);
            rays += r.Rays;
            sppPerSecond = (end - done) / Math.Max(r.WallSeconds, 1e-6);
            done = end;
            if (waitForSignal)
            {
                waitForSignal = false;
                io.Error.WriteLine(SignalWaitMarker);
                io.Error.Flush();
                signals.WaitForStop(TimeSpan.FromMinutes(1));
            }

            if (plan.AccumulationPath is not null && clock.Elapsed - lastCheckpoint >= plan.CheckpointEvery && done < plan.Target.End)
            {
                Checkpoint();
            }

            if (consoleProgress)
            {
                bool terminal = !Console.IsErrorRedirected;
                if (terminal || clock.Elapsed - lastLine >= RedirectedProgressEvery || done == plan.Target.End)
                {
                    lastLine = clock.Elapsed;
                    string line = ProgressLine(done - plan.Target.First, plan.Target.Count, done - startedAt, clock.Elapsed.TotalSeconds, rays, identity);
                    io.Error.Write(terminal ? "\r" + line + "   " : line + Environment.NewLine);
                }
            }
        }

        if (consoleProgress && !Console.IsErrorRedirected)
        {
            io.Error.WriteLine();
        }

        Checkpoint();
        return new SessionOutcome(film, new SampleRange(plan.Target.First, done), rays, clock.Elapsed.TotalSeconds, signals.StopRequested, checkpoints, checkpointSeconds, signals.Signal);
    }

    /// <summary>spp done, samples/s, Mrays/s and the time left at this rate.</summary>
    internal static string ProgressLine(int done, int total, int doneHere, double seconds, long rays, RenderIdentity identity)
    {
        double samplesPerSecond = (double)doneHere * identity.Width * identity.Height / Math.Max(seconds, 1e-9);
        double left = (total - done) * (double)identity.Width * identity.Height / Math.Max(samplesPerSecond, 1e-9);
        return string.Create(CultureInfo.InvariantCulture,
            $"pathbench: {done}/{total} spp, {seconds:F1} s, ETA {left:F0} s, {samplesPerSecond:F0} samples/s, {rays / 1e6 / Math.Max(seconds, 1e-9):F2} Mrays/s");
    }

    private static TimeSpan Min(TimeSpan a, TimeSpan b) => a < b ? a : b;

    private static Action? StallHook(CliIo io)
    {
        if (!int.TryParse(Environment.GetEnvironmentVariable(StallVariable), NumberStyles.None, CultureInfo.InvariantCulture, out int ms))
        {
            return null;
        }

        return () =>
        {
            TestLine(io, StallMarker);
            Thread.Sleep(ms);
        };
    }

    /// <summary>One whole line on stderr; the signal handler's thread and the render's thread both write these.</summary>
    private static void TestLine(CliIo io, string line)
    {
        lock (io.Error)
        {
            io.Error.WriteLine(line);
            io.Error.Flush();
        }
    }

    /// <summary>
    /// SIGINT and SIGTERM: the first asks the render to stop after the pass in flight; a second
    /// SIGINT is left to the runtime's default, which ends the process at once (the last
    /// checkpoint, written atomically, stays good).
    /// </summary>
    private sealed class StopSignals : IDisposable
    {
        private readonly PosixSignalRegistration _interrupt;
        private readonly PosixSignalRegistration _terminate;
        private readonly Action? _taken;
        private readonly ManualResetEventSlim _stopped = new();
        private int _requests;
        private string? _signal;

        public StopSignals(Action? taken)
        {
            _taken = taken;
            _interrupt = PosixSignalRegistration.Create(PosixSignal.SIGINT, Handle);
            _terminate = PosixSignalRegistration.Create(PosixSignal.SIGTERM, Handle);
        }

        public bool StopRequested => Volatile.Read(ref _requests) > 0;

        /// <summary>The first signal received, "SIGINT" or "SIGTERM"; null before one.</summary>
        public string? Signal => Volatile.Read(ref _signal);

        public void WaitForStop(TimeSpan bound) => _stopped.Wait(bound);

        public void Dispose()
        {
            _interrupt.Dispose();
            _terminate.Dispose();
            _stopped.Dispose();
        }

        private void Handle(PosixSignalContext context)
        {
            Interlocked.CompareExchange(ref _signal, context.Signal == PosixSignal.SIGTERM ? "SIGTERM" : "SIGINT", null);
            int n = Interlocked.Increment(ref _requests);
            if (n == 1 || context.Signal == PosixSignal.SIGTERM)
            {
                context.Cancel = true;
            }

            if (n == 1)
            {
                _taken?.Invoke();
            }

            _stopped.Set();
        }
    }
}
