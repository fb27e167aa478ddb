using System.Diagnostics;
using PathBench.Io;
using PathBench.TestSupport;

namespace PathBench.Cli.Tests.Io;

/// <summary>
/// A hard kill (SIGKILL) during an atomic write leaves its <c>.NAME.PID.N.tmp</c> behind; the next
/// write of the same target removes it once that process is gone, and never touches a live
/// process's temporary file. The dead and live processes are real children, their states reached
/// by waiting for exit and by holding their input open: no timing.
/// </summary>
public sealed class StaleTempFileTests
{
    [Fact]
    public void A_write_removes_the_temporary_files_of_its_target_left_by_dead_processes_only()
    {
        using var dir = new TempFolder();
        using Process live = WaitingChild();
        try
        {
            int dead = DeadProcessId();
            string target = dir.File("image.pfm");
            string stale = dir.Write(FormattableString.Invariant($".image.pfm.{dead}.3.tmp"), "torn");
            string staleToo = dir.Write(FormattableString.Invariant($".image.pfm.{dead}.4.tmp"), "torn");
            string theirs = dir.Write(FormattableString.Invariant($".image.pfm.{live.Id}.1.tmp"), "being written");
            string mine = dir.Write(FormattableString.Invariant($".image.pfm.{Environment.ProcessId}.999999.tmp"), "being written");
            string otherTarget = dir.Write(FormattableString.Invariant($".other.pfm.{dead}.1.tmp"), "torn");
            string notOurs = dir.Write(FormattableString.Invariant($".image.pfm.{dead}.tmp"), "someone else's naming");

            AtomicFile.WriteText(target, "new");

            Assert.Equal("new", File.ReadAllText(target));
            // Kept only if a new process took the dead id meanwhile (ids wrap after pid_max): then keeping it is right.
            bool reused = AtomicFile.ProcessIsAlive(dead);
            Assert.True(reused || !File.Exists(stale), "a dead process's temporary file was kept");
            Assert.True(reused || !File.Exists(staleToo), "a dead process's temporary file was kept");
            Assert.True(File.Exists(theirs), "a live process's temporary file was removed");
            Assert.True(File.Exists(mine), "this process's own temporary file (another thread's write) was removed");
            Assert.True(File.Exists(otherTarget), "a temporary file of another target was removed");
            Assert.True(File.Exists(notOurs), "a file not named as AtomicFile names its temporary files was removed");
        }
        finally
        {
            live.StandardInput.Close();
            live.WaitForExit();
        }
    }

    [Theory]
    [InlineData(".a.pfm.123.4.tmp", "a.pfm", 123)]
    [InlineData(".a.b.c.exr.77.1.tmp", "a.b.c.exr", 77)]
    [InlineData(".a.pfm.123.tmp", "a.pfm", null)]
    [InlineData(".a.pfm.x.1.tmp", "a.pfm", null)]
    [InlineData(".a.pfm.-5.1.tmp", "a.pfm", null)]
    [InlineData(".b.pfm.123.4.tmp", "a.pfm", null)]
    [InlineData("a.pfm.123.4.tmp", "a.pfm", null)]
    public void Temporary_file_names_give_their_owner(string name, string target, int? owner) =>
        Assert.Equal(owner, AtomicFile.TempOwner(name, target));

    /// <summary>The id of a child that has exited and been reaped, checked to belong to no process now (ids can be reused; then another is taken).</summary>
    private static int DeadProcessId()
    {
        for (int attempt = 0; attempt < 100; attempt++)
        {
            using var child = Process.Start(new ProcessStartInfo("/bin/true") { UseShellExecute = false })!;
            int pid = child.Id;
            child.WaitForExit();
            child.Dispose();
            if (!AtomicFile.ProcessIsAlive(pid))
            {
                return pid;
            }
        }

        throw new InvalidOperationException("every exited child's id was taken again at once");
    }

    /// <summary>A child that lives until its standard input is closed.</summary>
    private static Process WaitingChild()
    {
        var child = Process.Start(new ProcessStartInfo("/bin/cat") { UseShellExecute = false, RedirectStandardInput = true, RedirectStandardOutput = true })!;
        Assert.True(AtomicFile.ProcessIsAlive(child.Id));
        return child;
    }
}
