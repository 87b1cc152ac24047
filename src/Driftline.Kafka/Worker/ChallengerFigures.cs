namespace Driftline.Kafka.Worker;

/// <summary>One challenger against the champion on one partition, as <c>/metrics</c> shows it (replaced whole, so a scrape never reads half of one).</summary>
/// <param name="ChampionLogLoss">The champion's mean log-loss over the paired labels.</param>
/// <param name="ChallengerLogLoss">The challenger's, over the same labels.</param>
/// <param name="ChampionEce">The champion's rolling-window ECE at its latest metrics row (NaN before one).</param>
/// <param name="ChallengerEce">The challenger's, likewise.</param>
/// <param name="Evidence">Log of the betting wealth now.</param>
/// <param name="Threshold">The level it must reach, ln(1/ErrorRate).</param>
/// <param name="Paired">Labels paired.</param>
/// <param name="Decisions">Times the challenger was declared better.</param>
internal sealed record ChallengerFigures(double ChampionLogLoss, double ChallengerLogLoss, double ChampionEce, double ChallengerEce,
    double Evidence, double Threshold, long Paired, long Decisions);
