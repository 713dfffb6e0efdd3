using Triage.Core.Planning;

namespace Triage.Core.Tests.Planning;

// Identities from T. M. Cover, J. A. Thomas, Elements of Information Theory, 2nd ed. (2006):
// H of a uniform distribution over 2^k outcomes is k bits (ch. 2.1); I(S;J) = 0 when S is certain
// and I = H(S) for a noiseless channel (ch. 2.4); a binary symmetric channel with crossover p and
// uniform input carries 1 − H(p) bits (ch. 7.1.4). Tolerance 1e-12: closed forms, only rounding.
public class InformationTheoryTests
{
    [Fact]
    public void EntropyBits_UniformOverFour_IsTwoBits()
        => Assert.Equal(2.0, InformationTheory.EntropyBits([0.25, 0.25, 0.25, 0.25]), 12);

    [Fact]
    public void MutualInformationBits_SharpPrior_IsZero()
    {
        double[] channel = [0.7, 0.2, 0.1, 0.3, 0.5, 0.2, 0.1, 0.1, 0.8];

        Assert.Equal(0.0, InformationTheory.MutualInformationBits([0, 1, 0], channel), 12);
    }

    [Fact]
    public void MutualInformationBits_PerfectClassifier_EqualsPriorEntropy()
    {
        double[] prior = [0.5, 0.3, 0.2];
        double[] identity = [1, 0, 0, 0, 1, 0, 0, 0, 1];

        Assert.Equal(InformationTheory.EntropyBits(prior), InformationTheory.MutualInformationBits(prior, identity), 12);
    }

    [Fact]
    public void MutualInformationBits_BinarySymmetricChannel_IsOneMinusBinaryEntropy()
    {
        const double p = 0.1;
        var expected = 1 - InformationTheory.EntropyBits([p, 1 - p]);

        Assert.Equal(expected, InformationTheory.MutualInformationBits([0.5, 0.5], [1 - p, p, p, 1 - p]), 12);
        // 1 − H(0.1) = 0.531004 bits (Cover & Thomas ch. 7.1.4 formula, evaluated by hand; 6 digits).
        Assert.Equal(0.531004, expected, 6);
    }

    [Fact]
    public void MutualInformationBits_IdenticalRows_IsZero()
        => Assert.Equal(0.0, InformationTheory.MutualInformationBits([0.3, 0.7], [0.6, 0.4, 0.6, 0.4]), 12);

    [Fact]
    public void MutualInformationBits_WrongShape_Throws()
        => Assert.Throws<ArgumentException>(() => InformationTheory.MutualInformationBits([0.5, 0.5], [1, 0, 0]));
}
