using HumWatch.Core.Reporting;

namespace HumWatch.Cli.Dataset;

/// <summary>
/// How far a dataset check has got, updated by the workers and read by the progress line: files done of all, bytes
/// read (a file in flight counts by the share of it read so far) and the worst verdict so far.
/// </summary>
internal sealed class DatasetProgress
{
    private readonly long[] _sizes;
    private readonly Dictionary<int, double> _inFlight = [];
    private readonly object _gate = new();
    private long _doneBytes;
    private int _doneFiles;
    private Verdict? _worst;

    public DatasetProgress(IReadOnlyList<DatasetFile> files)
    {
        _sizes = [.. files.Select(f => f.SizeBytes)];
        TotalBytes = _sizes.Sum();
    }

    public int TotalFiles => _sizes.Length;

    public long TotalBytes { get; }

    public void FileStarted(int index)
    {
        lock (_gate)
        {
            _inFlight[index] = 0;
        }
    }

    /// <summary>Receives the share of file <paramref name="index"/> read so far (0..1).</summary>
    public IProgress<double> For(int index) => new FileShare(this, index);

    /// <summary>A file finished: checked with <paramref name="verdict"/>, or skipped (null) as already in a table.</summary>
    public void FileDone(int index, Verdict? verdict)
    {
        lock (_gate)
        {
            _inFlight.Remove(index);
            _doneBytes += _sizes[index];
            _doneFiles++;
            if (verdict is { } v && (_worst is null || v > _worst))
            {
                _worst = v;
            }
        }
    }

    public DatasetProgressSnapshot Snapshot()
    {
        lock (_gate)
        {
            var bytes = (double)_doneBytes;
            foreach (var (index, share) in _inFlight)
            {
                bytes += share * _sizes[index];
            }

            return new DatasetProgressSnapshot(_doneFiles, TotalFiles, (long)bytes, TotalBytes, _worst);
        }
    }

    private void Report(int index, double share)
    {
        lock (_gate)
        {
            if (_inFlight.ContainsKey(index))
            {
                _inFlight[index] = Math.Clamp(share, 0, 1);
            }
        }
    }

    private sealed class FileShare(DatasetProgress owner, int index) : IProgress<double>
    {
        public void Report(double value) => owner.Report(index, value);
    }
}

/// <summary>One reading of <see cref="DatasetProgress"/>.</summary>
internal readonly record struct DatasetProgressSnapshot(int DoneFiles, int TotalFiles, long DoneBytes, long TotalBytes, Verdict? Worst)
{
    /// <summary>"37/100 files, worst so far: warn".</summary>
    public string Describe() =>
        $"{DoneFiles}/{TotalFiles} files, worst so far: {(Worst is { } w ? w.ToText() : "none yet")}";
}
