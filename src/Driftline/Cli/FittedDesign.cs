namespace Driftline.Cli;

/// <summary>The design <c>fit</c> built from a file, ready for the binary or the multiclass fit.</summary>
/// <param name="Rows">Dense rows, one value per kept column.</param>
/// <param name="Labels">Each row's label (0/1, or a class index).</param>
/// <param name="SlotOf">Each column's hashed slot.</param>
/// <param name="Names">Each column's feature name.</param>
/// <param name="Signs">Each column's hash sign, turning a coefficient into the feature's own direction.</param>
/// <param name="References">The reference levels left out.</param>
/// <param name="BiasSlot">The intercept's slot.</param>
/// <param name="FeatureNames">The recorded text behind the hashes, saved with the model.</param>
/// <param name="Rejected">Lines that could not be read.</param>
internal sealed record FittedDesign(
    List<double[]> Rows,
    List<double> Labels,
    int[] SlotOf,
    string[] Names,
    double[] Signs,
    string[] References,
    int BiasSlot,
    Dictionary<string, string> FeatureNames,
    int Rejected);
