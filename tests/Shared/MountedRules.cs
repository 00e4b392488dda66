namespace DischargeGuard.Testing;

/// <summary>
/// A rules directory laid out as a mounted configuration volume presents it: <c>default.yaml</c> (and optionally
/// <c>sites</c> and <c>assets</c>) are symlinks through <c>..data</c>, which points at one version folder and is swapped
/// to another by rename(2), atomically, as the volume's update does.
/// </summary>
internal static class MountedRules
{
    private const string Data = "..data";

    /// <summary>Links <paramref name="mount"/> to the version folder <paramref name="version"/> (a name inside it).</summary>
    /// <param name="mount">The mount folder, holding the version folders.</param>
    /// <param name="version">The version folder's name, e.g. <c>..v1</c>.</param>
    /// <param name="layers">Also link <c>sites</c> and <c>assets</c>.</param>
    public static void Link(string mount, string version, bool layers)
    {
        Directory.CreateSymbolicLink(Path.Combine(mount, Data), version);
        File.CreateSymbolicLink(Path.Combine(mount, "default.yaml"), Path.Combine(Data, "default.yaml"));
        if (layers)
        {
            Directory.CreateSymbolicLink(Path.Combine(mount, "sites"), Path.Combine(Data, "sites"));
            Directory.CreateSymbolicLink(Path.Combine(mount, "assets"), Path.Combine(Data, "assets"));
        }
    }

    /// <summary>Points <c>..data</c> at <paramref name="version"/> in one rename.</summary>
    public static void Swap(string mount, string version)
    {
        var next = Path.Combine(mount, "..data_tmp");
        Directory.CreateSymbolicLink(next, version);
        Assert.Equal(0, Rename(next, Path.Combine(mount, Data)));
    }

    /// <summary>Swaps between two versions every <paramref name="pause"/> until stopped, on a thread of its own.</summary>
    public static MountSwapper StartSwapping(string mount, string first, string second, TimeSpan pause, CancellationToken stop) =>
        new(mount, first, second, pause, stop);

    [System.Runtime.InteropServices.DllImport("libc", EntryPoint = "rename", SetLastError = true)]
#pragma warning disable SYSLIB1054, CA2101 // a test-only libc call; the marshalling default is fine for ASCII paths
    private static extern int Rename([System.Runtime.InteropServices.MarshalAs(System.Runtime.InteropServices.UnmanagedType.LPUTF8Str)] string from, [System.Runtime.InteropServices.MarshalAs(System.Runtime.InteropServices.UnmanagedType.LPUTF8Str)] string to);
#pragma warning restore SYSLIB1054, CA2101
}

/// <summary>The swapping thread of <see cref="MountedRules.StartSwapping"/>: await it after stopping.</summary>
internal sealed class MountSwapper
{
    private int _swaps;

    internal MountSwapper(string mount, string first, string second, TimeSpan pause, CancellationToken stop) =>
        Running = Task.Factory.StartNew(
            () =>
            {
                while (!stop.IsCancellationRequested)
                {
                    // The link starts on the first version, so the first swap goes to the second.
                    MountedRules.Swap(mount, Volatile.Read(ref _swaps) % 2 == 0 ? second : first);
                    Interlocked.Increment(ref _swaps);
                    Thread.Sleep(pause);
                }
            },
            CancellationToken.None,
            TaskCreationOptions.LongRunning,
            TaskScheduler.Default);

    /// <summary>Swaps made so far.</summary>
    public int Swaps => Volatile.Read(ref _swaps);

    /// <summary>The swapping loop.</summary>
    public Task Running { get; }

    /// <summary>Awaits the loop.</summary>
    public System.Runtime.CompilerServices.TaskAwaiter GetAwaiter() => Running.GetAwaiter();
}
