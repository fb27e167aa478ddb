using System.Buffers.Binary;
using System.Runtime.InteropServices;

namespace PathBench.Io;

/// <summary>What a path names, found without opening it.</summary>
public enum FileKind
{
    /// <summary>Nothing exists there.</summary>
    Missing,

    /// <summary>A regular file: the only kind read or replaced.</summary>
    Regular,

    /// <summary>A folder.</summary>
    Directory,

    /// <summary>A named pipe: opening it for reading waits for a writer, possibly forever.</summary>
    Fifo,

    /// <summary>A character or block device.</summary>
    Device,

    /// <summary>A Unix-domain socket.</summary>
    Socket,

    /// <summary>Something else the system reports.</summary>
    Other,
}

/// <summary>
/// The type and identity of a path from <c>statx(2)</c> (links followed), so a reader can refuse a
/// FIFO before <c>open</c> blocks on it and an output can be compared with the inputs as the same
/// file (device and inode) whatever links lead to it.
/// </summary>
public readonly record struct FileStatus(FileKind Kind, ulong Device, ulong Inode)
{
    // statx(2) and <linux/stat.h>: the struct statx layout is the same on every architecture.
    private const int AtFdCwd = -100;
    private const uint StatxType = 0x1, StatxIno = 0x100;
    private const int StatxSize = 256, ModeOffset = 28, InodeOffset = 32, DevMajorOffset = 136, DevMinorOffset = 140;
    private const int FormatMask = 0xF000, Fifo = 0x1000, CharDevice = 0x2000, Dir = 0x4000, BlockDevice = 0x6000, Regular = 0x8000, Socket = 0xC000;

    /// <summary>What <paramref name="path"/> names, without opening it.</summary>
    public static FileStatus Of(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        if (!OperatingSystem.IsLinux())
        {
            return Portable(path);
        }

        byte[] buffer = new byte[StatxSize];
        if (NativeMethods.Statx(AtFdCwd, path, 0, StatxType | StatxIno, buffer) != 0)
        {
            // ENOENT and friends: a missing file is reported by the open that follows, in its own words.
            return new FileStatus(FileKind.Missing, 0, 0);
        }

        int mode = BinaryPrimitives.ReadUInt16LittleEndian(buffer.AsSpan(ModeOffset)) & FormatMask;
        FileKind kind = mode switch
        {
            Regular => FileKind.Regular,
            Dir => FileKind.Directory,
            Fifo => FileKind.Fifo,
            CharDevice or BlockDevice => FileKind.Device,
            Socket => FileKind.Socket,
            _ => FileKind.Other,
        };
        ulong device = ((ulong)BinaryPrimitives.ReadUInt32LittleEndian(buffer.AsSpan(DevMajorOffset)) << 32) | BinaryPrimitives.ReadUInt32LittleEndian(buffer.AsSpan(DevMinorOffset));
        return new FileStatus(kind, device, BinaryPrimitives.ReadUInt64LittleEndian(buffer.AsSpan(InodeOffset)));
    }

    /// <summary>The words an error uses for a kind that is not a regular file.</summary>
    public static string Describe(FileKind kind) => kind switch
    {
        FileKind.Directory => "a folder",
        FileKind.Fifo => "a named pipe (FIFO)",
        FileKind.Device => "a device",
        FileKind.Socket => "a socket",
        FileKind.Missing => "missing",
        FileKind.Regular => "a regular file",
        _ => "not a regular file",
    };

    private static FileStatus Portable(string path)
    {
        if (Directory.Exists(path))
        {
            return new FileStatus(FileKind.Directory, 0, 0);
        }

        if (!File.Exists(path))
        {
            return new FileStatus(FileKind.Missing, 0, 0);
        }

        return new FileStatus((File.GetAttributes(path) & FileAttributes.Device) != 0 ? FileKind.Device : FileKind.Regular, 0, 0);
    }

    private static class NativeMethods
    {
        [DllImport("libc", EntryPoint = "statx", SetLastError = true)]
        [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
        public static extern int Statx(int dirfd, [MarshalAs(UnmanagedType.LPUTF8Str)] string path, int flags, uint mask, byte[] buffer);
    }
}
