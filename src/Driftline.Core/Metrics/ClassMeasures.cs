namespace Driftline.Core.Metrics;

/// <summary>One class of a multiclass model, graded one against the rest.</summary>
/// <param name="Name">The class.</param>
/// <param name="MeanP">Mean predicted probability of the class.</param>
/// <param name="ObservedRate">Share of labels naming the class.</param>
/// <param name="Ece">The class's expected calibration error over the reliability bins.</param>
/// <param name="PriorMeanP">The class prior's mean probability of the class.</param>
internal readonly record struct ClassMeasures(string Name, double MeanP, double ObservedRate, double Ece, double PriorMeanP);
