namespace Driftline.Core.Options;

/// <summary>The per-coordinate adaptive learning rule of the online model.</summary>
internal enum LearnerKind
{
    /// <summary>FTRL-Proximal with L1 and L2 (McMahan et al. 2013).</summary>
    Ftrl,

    /// <summary>AdaGrad (Duchi, Hazan &amp; Singer 2011) with optional L2.</summary>
    AdaGrad,
}
