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

    /// <summary>Reads and validates every rule file in a directory. File names in errors are relative to it.</summary>
    /// <param name="directory">The rules directory.</param>
    /// <param name="loadedAt">Load time stamp.</param>
    /// <returns>The snapshot.</returns>
    public static RuleSetSnapshot LoadDirectory(string directory, DateTimeOffset loadedAt)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(directory);
        var layers = new List<RuleLayer>();
        var errors = new List<RuleFileError>();
        void Load(string path, LayerKind kind)
        {
            var rel = Path.GetRelativePath(directory, path).Replace('\\', '/');
            string text;
            try
            {
                if (new FileInfo(path).Length > MaxFileBytes)
                {
                    errors.Add(new RuleFileError(RuleFileErrorKind.Io, rel, 0, 0, "", $"The file is larger than {MaxFileBytes} bytes; rule files are small hand-edited documents."));
                    return;
                }

                text = File.ReadAllText(path);
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                errors.Add(new RuleFileError(RuleFileErrorKind.Io, rel, 0, 0, "", ex.Message));
                return;
            }

            try
            {
                var layer = RuleFileParser.Parse(rel, text, kind);
                var expectedId = Path.GetFileNameWithoutExtension(path);
                if (kind != LayerKind.Default && layer.Id != expectedId)
                {
                    errors.Add(new RuleFileError(RuleFileErrorKind.BadValue, rel, 0, 0, "layer.id", $"The layer id '{layer.Id}' differs from the file name '{expectedId}'."));
                }

                layers.Add(layer);
            }
            catch (RuleFileException ex)
            {
                errors.AddRange(ex.Errors);
            }
        }

        var defaultPath = Path.Combine(directory, "default.yaml");
        if (!File.Exists(defaultPath))
        {
            throw new RuleFileException([new RuleFileError(RuleFileErrorKind.Io, "default.yaml", 0, 0, "", "The rules directory has no default.yaml.")]);
        }

        Load(defaultPath, LayerKind.Default);
        foreach (var (sub, kind) in new[] { ("sites", LayerKind.Site), ("assets", LayerKind.Asset) })
        {
            var dir = Path.Combine(directory, sub);
            if (!Directory.Exists(dir))
            {
                continue;
            }

            foreach (var f in Directory.EnumerateFiles(dir, "*.yaml").Order(StringComparer.Ordinal))
            {
                if (!Path.GetFileName(f).StartsWith('.'))
                {
                    Load(f, kind);
                }
            }
        }

        if (errors.Count > 0)
        {
            throw new RuleFileException(errors);
        }

        return RuleSetSnapshot.Create(layers, loadedAt);
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
