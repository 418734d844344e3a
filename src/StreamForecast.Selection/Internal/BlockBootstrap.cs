namespace StreamForecast.Selection.Internal;

/// <summary>
/// The circular block bootstrap (Politis &amp; Romano 1992, from memory): a stream made of blocks of <c>L</c> consecutive
/// residuals, each block starting at a uniformly drawn position and wrapping around the end of the sample, so every residual
/// is equally likely and dependence within a block is kept. With L = 1 it is the ordinary independent bootstrap.
/// </summary>
internal sealed class BlockBootstrap
{
    private readonly double[] _residuals;
    private readonly int _blockLength;
    private Random _random;
    private int _position;
    private int _left;

    public BlockBootstrap(double[] residuals, int blockLength)
    {
        _residuals = residuals;
        _blockLength = blockLength;
        _random = new Random(0);
    }

    /// <summary>Starts a new stream from its own seed.</summary>
    public void Restart(int seed)
    {
        _random = new Random(seed);
        _left = 0;
    }

    public double Next()
    {
        if (_left == 0)
        {
            _position = _random.Next(_residuals.Length);
            _left = _blockLength;
        }

        double value = _residuals[_position];
        _position = _position + 1 == _residuals.Length ? 0 : _position + 1;
        _left--;
        return value;
    }
}
