namespace PathBench.Imaging;

/// <summary>The OpenEXR compressions PathBench reads and writes; values are the codes stored in the file.</summary>
public enum ExrCompression
{
    /// <summary>Uncompressed, one scanline per chunk.</summary>
    None = 0,

    /// <summary>zlib over one predictor-coded scanline per chunk.</summary>
    Zips = 2,

    /// <summary>zlib over blocks of 16 predictor-coded scanlines.</summary>
    Zip = 3,
}

/// <summary>Channel sample types; values are the codes stored in the file.</summary>
public enum ExrPixelType
{
    /// <summary>32-bit unsigned integer (read: not supported for colour channels).</summary>
    UInt = 0,

    /// <summary>IEEE 754 binary16.</summary>
    Half = 1,

    /// <summary>IEEE 754 binary32.</summary>
    Float = 2,
}

/// <summary>Which channels a written file carries.</summary>
public enum ExrChannelSet
{
    /// <summary>R, G, B.</summary>
    Rgb,

    /// <summary>R, G, B and A = 1 (opaque).</summary>
    Rgba,

    /// <summary>Y only: Rec. 709 luminance of the image (ITU-R BT.709 weights).</summary>
    Y,
}

/// <summary>How <see cref="ExrCodec"/> writes a file.</summary>
/// <param name="Compression">Chunk compression.</param>
/// <param name="PixelType">Sample type of every channel (HALF rounds to nearest even; values beyond ±65504 become ±infinity).</param>
/// <param name="Channels">Channel set.</param>
public sealed record ExrWriteOptions(
    ExrCompression Compression = ExrCompression.Zip,
    ExrPixelType PixelType = ExrPixelType.Float,
    ExrChannelSet Channels = ExrChannelSet.Rgb);
