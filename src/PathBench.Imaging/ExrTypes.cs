namespace PathBench.Imaging;

/// <summary>
/// The OpenEXR compressions; values are the codes stored in the file (OpenEXR file layout
/// specification). The writer writes <see cref="None"/>, <see cref="Zips"/> and <see cref="Zip"/>.
/// </summary>
public enum ExrCompression
{
    /// <summary>Uncompressed, one scanline per chunk.</summary>
    None = 0,

    /// <summary>Run-length coding of the predictor-coded bytes, one scanline per chunk.</summary>
    Rle = 1,

    /// <summary>zlib over one predictor-coded scanline per chunk.</summary>
    Zips = 2,

    /// <summary>zlib over blocks of 16 predictor-coded scanlines.</summary>
    Zip = 3,

    /// <summary>Haar wavelet and Huffman coding over blocks of 32 scanlines (lossless).</summary>
    Piz = 4,

    /// <summary>FLOAT rounded to 24 bits, then byte planes and zlib, 16 scanlines (lossy for FLOAT only).</summary>
    Pxr24 = 5,

    /// <summary>HALF in 4×4 blocks of 14 bytes, 32 scanlines (lossy).</summary>
    B44 = 6,

    /// <summary>B44 with flat blocks in 3 bytes (lossy).</summary>
    B44A = 7,

    /// <summary>DCT-based lossy coding, 32 scanlines.</summary>
    Dwaa = 8,

    /// <summary>DCT-based lossy coding, 256 scanlines.</summary>
    Dwab = 9,
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
