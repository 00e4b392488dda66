using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;

namespace DischargeGuard.Rules.Provider;

/// <summary>The outcome of a reload.</summary>
/// <param name="Succeeded">Whether the new files became the active set.</param>
/// <param name="Digest">The digest in force after the reload (the old one when it failed).</param>
/// <param name="Errors">The errors when it failed.</param>
public sealed record ReloadResult(bool Succeeded, string Digest, IReadOnlyList<RuleFileError> Errors);

/// <summary>Gives the active rule set and replaces it atomically on reload.</summary>
public interface IRuleSetProvider
{
    /// <summary>The active snapshot. Take it once per evaluation: a reload never changes a snapshot already taken.</summary>
    RuleSetSnapshot Current { get; }

    /// <summary>The errors of the last failed reload, or null after a success.</summary>
    ReloadResult? LastError { get; }

    /// <summary>Raised after every reload attempt.</summary>
    event EventHandler<ReloadResult>? Reloaded;

    /// <summary>Reloads every file now; on failure the last good set stays in force.</summary>
    /// <returns>The outcome.</returns>
    ReloadResult Reload();

    /// <summary>Reloads on a thread-pool thread.</summary>
    /// <param name="cancellationToken">Cancels the wait, not a reload in progress.</param>
    /// <returns>The outcome.</returns>
    Task<ReloadResult> ReloadAsync(CancellationToken cancellationToken = default);
}

/// <summary>
/// Loads <c>default.yaml</c>, <c>sites/*.yaml</c> and <c>assets/*.yaml</c> from a rules directory and, when asked,
/// watches the directory (including subdirectories) and reloads after changes settle. Mounted configuration often
/// changes by swapping a symlink, so any event re-reads every file rather than the one named in the event.
/// </summary>
public sealed class FileRuleSetProvider : IRuleSetProvider, IDisposable
{
    /// <summary>Largest rule file read (1 MiB); a larger file is refused rather than parsed.</summary>
    public const long MaxFileBytes = 1 << 20;

    /// <summary>Most reads of the directory before a load gives up on it settling.</summary>
    private const int MaxReads = 10;

    private readonly string _directory;
    private readonly TimeProvider _time;
    private readonly Lock _reloadLock = new();
    private readonly TimeSpan _debounce;
    private FileSystemWatcher? _watcher;
    private ITimer? _timer;
    private volatile RuleSetSnapshot _current;
    private volatile ReloadResult? _lastError;

    private FileRuleSetProvider(string directory, RuleSetSnapshot first, TimeSpan debounce, TimeProvider time)
    {
        _directory = directory;
        _current = first;
        _debounce = debounce;
        _time = time;
    }

    /// <inheritdoc />
    public event EventHandler<ReloadResult>? Reloaded;

    /// <inheritdoc />
    public RuleSetSnapshot Current => _current;

    /// <inheritdoc />
    public ReloadResult? LastError => _lastError;

    /// <summary>
    /// Loads the directory; throws <see cref="RuleFileException"/> when the files are invalid (a broken rule
    /// file stops start-up with file, line and reason).
    /// </summary>
    /// <param name="directory">The rules directory.</param>
    /// <param name="watch">Watch for changes and reload.</param>
    /// <param name="debounce">Quiet time after the last change before reloading (default 500 ms).</param>
    /// <param name="time">Clock, for tests.</param>
    /// <returns>The provider.</returns>
    public static FileRuleSetProvider Open(string directory, bool watch = true, TimeSpan? debounce = null, TimeProvider? time = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(directory);
        var t = time ?? TimeProvider.System;
        var provider = new FileRuleSetProvider(Path.GetFullPath(directory), LoadDirectory(directory, t.GetUtcNow()), debounce ?? TimeSpan.FromMilliseconds(500), t);
        if (watch)
        {
            provider.StartWatching();
        }

        return provider;
    }

    /// <summary>
    /// Reads and validates every rule file in a directory. File names in errors are relative to it. The files are parsed
    /// from one consistent read of the directory: it is read until two reads in a row find the same files with the same
    /// bytes and modification times, in folders with the same modification times, so a change made while it is read (a
    /// file rewritten, added or deleted, a mounted volume's symlink swapped) cannot combine files of two versions into a
    /// set that was never on disk.
    /// </summary>
    /// <param name="directory">The rules directory.</param>
    /// <param name="loadedAt">Load time stamp.</param>
    /// <returns>The snapshot.</returns>
    public static RuleSetSnapshot LoadDirectory(string directory, DateTimeOffset loadedAt)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(directory);
        // The same routine as the service's candidate check and the gate's rules check: one verdict for one set of files.
        return RuleSetValidation.Build(ReadConsistently(directory).Select(f => (f.Name, f.Bytes is null ? null : Decode(f.Bytes), f.Error)), loadedAt);
    }

    /// <summary>One rule file as read: its modification time and bytes, or why it could not be read.</summary>
    private sealed record RuleFileBytes(string Name, LayerKind Kind, DateTime Modified, byte[]? Bytes, RuleFileError? Error)
    {
        public bool SameAs(RuleFileBytes other) =>
            Name == other.Name && Kind == other.Kind && Modified == other.Modified && Error == other.Error
            && (Bytes is null ? other.Bytes is null : other.Bytes is not null && Bytes.AsSpan().SequenceEqual(other.Bytes));
    }

    /// <summary>One read of the directory: the folders' modification times when it began, then every file.</summary>
    private sealed record DirectoryRead(DateTime[] Folders, List<RuleFileBytes> Files)
    {
        public bool SameAs(DirectoryRead other) =>
            Folders.AsSpan().SequenceEqual(other.Folders)
            && Files.Count == other.Files.Count && Files.Zip(other.Files).All(p => p.First.SameAs(p.Second));
    }

    // Two reads agree only if they found the same files with the same bytes and the same modification times of the
    // files and folders. Bytes alone can agree on the same mix twice when the reader is slow and the directory keeps
    // swapping; a swap, rename or new file between the two reads also moves a folder's time.
    private static List<RuleFileBytes> ReadConsistently(string directory)
    {
        var previous = ReadAll(directory);
        for (var read = 2; read <= MaxReads; read++)
        {
            var next = ReadAll(directory);
            if (next.SameAs(previous))
            {
                return next.Files;
            }

            previous = next;
        }

        throw new RuleFileException([new RuleFileError(RuleFileErrorKind.Io, ".", 0, 0, "",
            $"The rule files kept changing while they were read ({MaxReads} reads, no two in a row alike), so none was loaded. Load them again once the change is complete.")]);
    }

    // default.yaml, then sites/*.yaml and assets/*.yaml in name order (dot files skipped), as bytes.
    private static DirectoryRead ReadAll(string directory)
    {
        var folders = new[] { directory, Path.Combine(directory, "sites"), Path.Combine(directory, "assets") }.Select(Directory.GetLastWriteTimeUtc).ToArray();
        var defaultPath = Path.Combine(directory, "default.yaml");
        if (!File.Exists(defaultPath))
        {
            throw new RuleFileException([new RuleFileError(RuleFileErrorKind.Io, "default.yaml", 0, 0, "", "The rules directory has no default.yaml.")]);
        }

        var files = new List<RuleFileBytes> { Read(directory, defaultPath, LayerKind.Default) };
        foreach (var (sub, kind) in new[] { ("sites", LayerKind.Site), ("assets", LayerKind.Asset) })
        {
            var dir = Path.Combine(directory, sub);
            if (!Directory.Exists(dir))
            {
                continue;
            }

            List<string> paths;
            try
            {
                paths = Directory.EnumerateFiles(dir, "*.yaml").Where(f => !Path.GetFileName(f).StartsWith('.')).Order(StringComparer.Ordinal).ToList();
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                files.Add(new RuleFileBytes(sub, kind, default, null, new RuleFileError(RuleFileErrorKind.Io, sub, 0, 0, "", ex.Message)));
                continue;
            }

            files.AddRange(paths.Select(f => Read(directory, f, kind)));
        }

        return new DirectoryRead(folders, files);
    }

    private static RuleFileBytes Read(string directory, string path, LayerKind kind)
    {
        var name = Path.GetRelativePath(directory, path).Replace('\\', '/');
        var modified = File.GetLastWriteTimeUtc(path);
        try
        {
            using var stream = File.OpenRead(path);
            using var bytes = new MemoryStream();
            if (stream.Length <= MaxFileBytes)
            {
                stream.CopyTo(bytes);
            }

            // Checked after the copy too: the file may grow while it is read.
            if (stream.Length > MaxFileBytes || bytes.Length > MaxFileBytes)
            {
                return new RuleFileBytes(name, kind, modified, null, new RuleFileError(RuleFileErrorKind.Io, name, 0, 0, "", $"The file is larger than {MaxFileBytes} bytes; rule files are small hand-edited documents."));
            }

            return new RuleFileBytes(name, kind, modified, bytes.ToArray(), null);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return new RuleFileBytes(name, kind, modified, null, new RuleFileError(RuleFileErrorKind.Io, name, 0, 0, "", ex.Message));
        }
    }

    // As File.ReadAllText decodes: UTF-8 unless a byte-order mark names another encoding.
    private static string Decode(byte[] bytes)
    {
        using var reader = new StreamReader(new MemoryStream(bytes), System.Text.Encoding.UTF8, detectEncodingFromByteOrderMarks: true);
        return reader.ReadToEnd();
    }

    /// <inheritdoc />
    public ReloadResult Reload()
    {
        lock (_reloadLock)
        {
            ReloadResult result;
            try
            {
                var next = LoadDirectory(_directory, _time.GetUtcNow());
                _current = next;
                _lastError = null;
                result = new ReloadResult(true, next.Digest, []);
            }
            catch (RuleFileException ex)
            {
                result = new ReloadResult(false, _current.Digest, ex.Errors);
                _lastError = result;
            }
#pragma warning disable CA1031 // A reload runs on a timer thread: any failure must keep the last good set, never end the process.
            catch (Exception ex)
#pragma warning restore CA1031
            {
                result = new ReloadResult(false, _current.Digest, [new RuleFileError(RuleFileErrorKind.Io, ".", 0, 0, "", ex.GetType().Name + ": " + ex.Message)]);
                _lastError = result;
            }

            Reloaded?.Invoke(this, result);
            return result;
        }
    }

    /// <inheritdoc />
    public Task<ReloadResult> ReloadAsync(CancellationToken cancellationToken = default) => Task.Run(Reload, cancellationToken);

    private void StartWatching()
    {
        _timer = _time.CreateTimer(_ => Reload(), null, Timeout.InfiniteTimeSpan, Timeout.InfiniteTimeSpan);
        _watcher = new FileSystemWatcher(_directory)
        {
            IncludeSubdirectories = true,
            NotifyFilter = NotifyFilters.FileName | NotifyFilters.DirectoryName | NotifyFilters.LastWrite | NotifyFilters.Size | NotifyFilters.CreationTime,
        };
        FileSystemEventHandler onChange = (_, _) => _timer?.Change(_debounce, Timeout.InfiniteTimeSpan);
        _watcher.Changed += onChange;
        _watcher.Created += onChange;
        _watcher.Deleted += onChange;
        _watcher.Renamed += (_, _) => _timer?.Change(_debounce, Timeout.InfiniteTimeSpan);
        _watcher.Error += (_, _) => _timer?.Change(_debounce, Timeout.InfiniteTimeSpan);
        _watcher.EnableRaisingEvents = true;
    }

    /// <inheritdoc />
    public void Dispose()
    {
        _watcher?.Dispose();
        _timer?.Dispose();
    }
}
