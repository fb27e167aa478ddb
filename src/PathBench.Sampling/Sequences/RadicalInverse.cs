using System.Runtime.CompilerServices;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Sequences;

/// <summary>
/// Radical inverses in prime bases, for the Halton (1960) and Hammersley sequences,
/// plain and with random digit permutations (one independent permutation of the digits
/// 0..b−1 per digit position, the randomization of Braaten &amp; Weller 1979 made random).
/// </summary>
public static class RadicalInverse
{
    /// <summary>How many prime bases are available (and so the Halton dimension limit).</summary>
    public const int PrimeCount = 1024;

    private static readonly int[] PrimeTable = BuildPrimes(PrimeCount);

    /// <summary>The first <see cref="PrimeCount"/> primes, 2, 3, 5, …</summary>
    public static ReadOnlySpan<int> Primes => PrimeTable;

    /// <summary>The radical inverse of <paramref name="index"/> in base <paramref name="b"/>: its digits mirrored about the radix point.</summary>
    [MethodImpl(InliningOptions.HotPath)]
    public static double Plain(uint index, int b)
    {
        if (b == 2)
        {
            return BitReversal.Reverse(index) * (1.0 / 4294967296.0);
        }

        // Reverse the digits as an integer, then divide once: a single rounding, so the
        // result is the correctly rounded value of the exact rational digit expansion.
        ulong reversed = 0;
        ulong scale = 1;
        uint ub = (uint)b;
        while (index != 0)
        {
            uint next = index / ub;
            reversed = reversed * ub + (index - next * ub);
            scale *= ub;
            index = next;
        }

        return reversed / (double)scale;
    }

    /// <summary>
    /// The radical inverse with digit position k mapped through its own permutation π_k
    /// chosen by hashing (<paramref name="key"/>, k). The zeros above the index's leading digit
    /// go through their positions' permutations too: π_k(0) at position k is tied to π_k(d) of
    /// every longer index, and that tie is what keeps the first b^m points one per b^−m stratum.
    /// So every position below <see cref="DigitsFor"/>(b) (the most digits a 32-bit index has) is
    /// permuted; the positions beyond are zeros for every index, so together they are one
    /// uniform number on [0, b^−K) shared by all points, drawn from one hash: exact in
    /// distribution for the whole point set.
    /// </summary>
    [MethodImpl(InliningOptions.HotPath)]
    public static double Permuted(uint index, int b, ulong key)
    {
        Span<double> one = stackalloc double[1];
        PermutedBatch(index, b, key, one);
        return one[0];
    }

    /// <summary>
    /// <see cref="Permuted"/> of the consecutive indices <paramref name="firstIndex"/>, <paramref name="firstIndex"/>+1, …
    /// (one per element of <paramref name="xs"/>), bit for bit: the digit positions' permutation seeds are hashed
    /// once per batch, the zero tail looked up once, and for bases small enough a table of the permuted digits per
    /// position and digit is filled as they are met, so the upper digits, which consecutive indices share, are
    /// permuted once per batch rather than once per point.
    /// </summary>
    public static void PermutedBatch(uint firstIndex, int b, ulong key, Span<double> xs)
    {
        if (b == 2)
        {
            ulong shift = SampleHash.Mix64(key);
            for (int i = 0; i < xs.Length; i++)
            {
                ulong bits = ((ulong)BitReversal.Reverse(firstIndex + (uint)i) << 32) ^ shift;
                xs[i] = (bits >> 11) * (1.0 / 9007199254740992.0);
            }

            return;
        }

        // Positions at and above the index's length hold permuted zeros, the same for every
        // point of this (pixel, dimension): their sum comes from a per-thread cache, computed
        // once per key, with the positions' permutation seeds. The cache changes no value, only
        // the time (tested against PermutedDirect).
        ReadOnlySpan<double> zeroTail = ZeroTails.For(key, b, out ReadOnlySpan<uint> seeds);
        int digits = zeroTail.Length - 1;
        uint ub = (uint)b;
        double invBase = 1.0 / b;
        // Permuted digit per (position, digit), 0xFF until met; only where it fits a small stack table, and only where
        // a digit can repeat: a run whose last index is below b has one distinct digit per point (the common case of a
        // large base), so the table's fill would be pure cost there.
        const int TableEntries = 512;
        bool tabled = xs.Length > 1 && b < 0xFF && digits * b <= TableEntries && (ulong)firstIndex + (ulong)xs.Length > (ulong)b;
        Span<byte> table = tabled ? stackalloc byte[TableEntries] : default;
        table.Fill(0xFF);
        for (int i = 0; i < xs.Length; i++)
        {
            uint index = firstIndex + (uint)i;
            double weight = invBase;
            double sum = 0;
            int k = 0;
            for (; index != 0; k++)
            {
                uint next = index / ub;
                uint digit = index - next * ub;
                uint permuted;
                if (tabled)
                {
                    int slot = k * b + (int)digit;
                    permuted = table[slot];
                    if (permuted == 0xFF)
                    {
                        permuted = KenslerPermutation.Permute(digit, ub, seeds[k]);
                        table[slot] = (byte)permuted;
                    }
                }
                else
                {
                    permuted = KenslerPermutation.Permute(digit, ub, seeds[k]);
                }

                sum += permuted * weight;
                weight *= invBase;
                index = next;
            }

            xs[i] = UnitInterval.Clamp(sum + zeroTail[k]);
        }
    }

    /// <summary>The same value as <see cref="Permuted"/>, digit by digit with no cache: the reference it is tested against.</summary>
    internal static double PermutedDirect(uint index, int b, ulong key)
    {
        if (b == 2)
        {
            return Permuted(index, b, key);
        }

        uint ub = (uint)b;
        double invBase = 1.0 / b;
        double weight = invBase;
        double sum = 0;
        int digits = DigitsFor(b);
        for (int k = 0; k < digits; k++)
        {
            uint next = index / ub;
            uint digit = index - next * ub;
            sum += KenslerPermutation.Permute(digit, ub, (uint)SampleHash.Combine(key, (ulong)k)) * weight;
            weight *= invBase;
            index = next;
        }

        return UnitInterval.Clamp(sum + ZeroTails.Shared(key) * weight * b);
    }

    /// <summary>
    /// Per key, tail[len] = Σ_{k=len}^{K−1} π_k(0)·b^−(k+1) plus the shared uniform tail below
    /// b^−K, summed from the deepest position up. Always computed the same way from the key, so a
    /// cache hit and a miss give the same bits; against <see cref="PermutedDirect"/>, which adds in
    /// another order, values agree to rounding (a few 1e-17).
    /// </summary>
    private static class ZeroTails
    {
        // One slot per base among the first 256 primes (a path's dimensions), so the
        // dimensions of one pixel never evict each other; bases further out share slots.
        private const int Slots = 256;

        // Base 3 has the most digits of any odd base (21): every slot holds that many plus one.
        private static readonly int Stride = DigitsFor(3) + 1;

        // Slot of each base: its index among the primes, modulo Slots; and its digit count.
        private static readonly int[] SlotOfBase = BuildSlots();
        private static readonly int[] DigitsOfBase = BuildDigits();

        // Flat per-thread tables, filled in place: a miss recomputes a slot without allocating
        // (one array per miss cost about 111 B per sample when slots thrashed).
        [ThreadStatic]
        private static ulong[]? t_keys;

        [ThreadStatic]
        private static int[]? t_bases;

        [ThreadStatic]
        private static double[]? t_tails;

        [ThreadStatic]
        private static uint[]? t_seeds;

        public static double Shared(ulong key) => SampleHash.ToUnit(SampleHash.Combine(key, TailSalt));

        /// <summary>The zero tails of (key, b), and in <paramref name="seeds"/> the permutation seed of each digit position, (uint)Combine(key, k).</summary>
        public static ReadOnlySpan<double> For(ulong key, int b, out ReadOnlySpan<uint> seeds)
        {
            t_keys ??= new ulong[Slots];
            t_bases ??= new int[Slots];
            t_tails ??= new double[Slots * Stride];
            t_seeds ??= new uint[Slots * Stride];
            int slot = SlotOfBase[b];
            int digits = DigitsOfBase[b];
            Span<double> tail = t_tails.AsSpan(slot * Stride, digits + 1);
            Span<uint> slotSeeds = t_seeds.AsSpan(slot * Stride, digits);
            seeds = slotSeeds;
            if (t_keys[slot] == key && t_bases[slot] == b)
            {
                return tail;
            }

            double[]? powers = InversePowers(b);
            double acc = Shared(key) * (powers is null ? PortableMath.InversePower(b, digits) : powers[digits]);
            tail[digits] = acc;
            // Every position's image of 0 at once (eight lanes at a time): the bulk of a (pixel, dimension)'s cost.
            SampleHash.CombineLow32Run(key, slotSeeds);
            Span<uint> zeros = stackalloc uint[digits];
            KenslerPermutation.PermuteZeros((uint)b, slotSeeds, zeros);
            for (int k = digits - 1; k >= 0; k--)
            {
                acc += zeros[k] * (powers is null ? PortableMath.InversePower(b, k + 1) : powers[k + 1]);
                tail[k] = acc;
            }

            t_keys[slot] = key;
            t_bases[slot] = b;
            return tail;
        }

        // PortableMath.InversePower(b, k) for k = 0 … digits of each base among the first Slots primes,
        // made once: the tail of every (pixel, dimension) needs them all, and each costs a loop of k steps.
        private static readonly double[][] PowersOfBase = BuildPowers();

        // Null for the bases past the first Slots primes, which compute them as they go.
        private static double[]? InversePowers(int b) => Primes[SlotOfBase[b]] == b ? PowersOfBase[SlotOfBase[b]] : null;

        private static double[] Powers(int b, int digits)
        {
            var powers = new double[digits + 1];
            for (int k = 0; k <= digits; k++)
            {
                powers[k] = PortableMath.InversePower(b, k);
            }

            return powers;
        }

        private static double[][] BuildPowers()
        {
            var powers = new double[Slots][];
            for (int i = 0; i < Slots; i++)
            {
                powers[i] = Powers(Primes[i], DigitsFor(Primes[i]));
            }

            return powers;
        }

        private static int[] BuildSlots()
        {
            ReadOnlySpan<int> primes = Primes;
            var slots = new int[primes[^1] + 1];
            for (int i = 0; i < primes.Length; i++)
            {
                slots[primes[i]] = i % Slots;
            }

            return slots;
        }

        private static int[] BuildDigits()
        {
            ReadOnlySpan<int> primes = Primes;
            var digits = new int[primes[^1] + 1];
            foreach (int p in primes)
            {
                digits[p] = DigitsFor(p);
            }

            return digits;
        }
    }

    /// <summary>The number of base-<paramref name="b"/> digits of the largest 32-bit index: ⌈32 / log₂ b⌉.</summary>
    public static int DigitsFor(int b)
    {
        int k = 0;
        for (ulong p = 1; p <= uint.MaxValue; p *= (ulong)b)
        {
            k++;
        }

        return k;
    }

    private const ulong TailSalt = 0x5441494C00000000UL;

    private static int[] BuildPrimes(int count)
    {
        var primes = new int[count];
        int found = 0;
        for (int n = 2; found < count; n++)
        {
            bool prime = true;
            for (int i = 0; i < found && primes[i] * primes[i] <= n; i++)
            {
                if (n % primes[i] == 0)
                {
                    prime = false;
                    break;
                }
            }

            if (prime)
            {
                primes[found++] = n;
            }
        }

        return primes;
    }
}
