namespace Driftline.Core.Challengers;

/// <summary>What a <see cref="ChallengerJudge"/> needs to continue exactly after a restart.</summary>
/// <param name="Test">The sequential test's evidence and estimates.</param>
/// <param name="Paired">Labels paired so far.</param>
/// <param name="GivenUp">Labels only one side graded, given up waiting for the other.</param>
/// <param name="ChampionSum">Sum of the champion's log-losses over the paired labels.</param>
/// <param name="ChallengerSum">Sum of the challenger's log-losses over the paired labels.</param>
/// <param name="DecidedAt">Paired labels at which the challenger was declared better.</param>
/// <param name="ChampionWaiting">Champion-graded labels waiting for the challenger's, oldest first.</param>
/// <param name="ChampionCount">Labels the champion has graded without the challenger's already waiting (numbers the waiting ones).</param>
/// <param name="ChallengerWaiting">Challenger-graded labels waiting for the champion's, oldest first.</param>
/// <param name="ChallengerCount">Likewise for the challenger.</param>
internal sealed record ChallengerJudgeState(PairedLossState Test, long Paired, long GivenUp, double ChampionSum, double ChallengerSum,
    List<long> DecidedAt, List<WaitingLoss> ChampionWaiting, long ChampionCount, List<WaitingLoss> ChallengerWaiting, long ChallengerCount);
