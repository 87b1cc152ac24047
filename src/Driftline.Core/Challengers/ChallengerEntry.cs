using Driftline.Core.Scoring;

namespace Driftline.Core.Challengers;

/// <summary>One challenger of a <see cref="ChallengerPanel"/>: its name, engine and judge.</summary>
/// <param name="Name">The configuration name.</param>
/// <param name="Engine">Its engine, scoring in the shadow.</param>
/// <param name="Judge">Its test against the champion.</param>
internal sealed record ChallengerEntry(string Name, ScoringEngine Engine, ChallengerJudge Judge);
