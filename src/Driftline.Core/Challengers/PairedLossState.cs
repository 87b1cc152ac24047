namespace Driftline.Core.Challengers;

/// <summary>What a <see cref="PairedLossTest"/> needs to continue exactly: the evidence and the bet's running estimates.</summary>
/// <param name="LogWealth">Natural log of the current evidence (the betting wealth, starting at 0 = wealth 1).</param>
/// <param name="Mean">Forgotten mean of the scaled differences seen so far.</param>
/// <param name="Square">Forgotten mean of their squares.</param>
/// <param name="Weight">Forgotten count behind both means.</param>
/// <param name="Labels">Paired labels since the test last started.</param>
/// <param name="Decisions">Times the challenger has been declared better.</param>
internal sealed record PairedLossState(double LogWealth, double Mean, double Square, double Weight, long Labels, long Decisions);
