using System.Text.Json.Serialization;
using Driftline.Core.Alerts;

namespace Driftline.Core.Options;

/// <summary>Everything the score/learn core needs, bound from a configuration file.</summary>
internal sealed class DriftlineOptions
{
    /// <summary>The online model.</summary>
    public ModelOptions Model { get; set; } = new();

    /// <summary>Late labels.</summary>
    public LabelOptions Labels { get; set; } = new();

    /// <summary>
    /// Size limits on input records. Read by the line reader and the parser, not engine
    /// state, so left out of snapshots: a restored engine reads with the limits in force now.
    /// </summary>
    [JsonIgnore]
    public InputOptions Input { get; set; } = new();

    /// <summary>Rolling measures.</summary>
    public MonitorOptions Monitor { get; set; } = new();

    /// <summary>How challenger configurations are judged against this one (when it is the champion).</summary>
    public Challengers.ChallengerOptions Challengers { get; set; } = new();

    /// <summary>The live correction of the served probabilities; off by default.</summary>
    public Recalibration.RecalibrationOptions Recalibration { get; set; } = new();

    /// <summary>Alert rules; null means <see cref="AlertRuleOptions.Defaults"/>, an empty list means none.</summary>
    public List<AlertRuleOptions>? Alerts { get; set; }

    /// <summary>
    /// Where alerts are POSTed besides the run's own outputs; off unless <c>Webhook:Url</c> is
    /// set. Delivery settings, not engine state, so left out of snapshots: a webhook address
    /// often carries a secret and must not end up in <c>model.json</c> or a checkpoint.
    /// </summary>
    [JsonIgnore]
    public WebhookOptions Webhook { get; set; } = new();

    /// <summary>The rules in force.</summary>
    public IReadOnlyList<AlertRuleOptions> EffectiveAlerts => Alerts ?? AlertRuleOptions.Defaults();

    /// <summary>Checks every section; returns all the mistakes found, not just the first.</summary>
    public IReadOnlyList<OptionError> Validate()
    {
        var errors = new List<OptionError>();
        errors.AddRange(Model.Validate());
        errors.AddRange(Labels.Validate());
        errors.AddRange(Input.Validate());
        errors.AddRange(Monitor.Validate());
        errors.AddRange(Webhook.Validate());
        errors.AddRange(Recalibration.Validate());
        errors.AddRange(Challengers.Validate());
        var rules = EffectiveAlerts;
        for (int i = 0; i < rules.Count; i++)
        {
            errors.AddRange(rules[i].Validate($"Alerts:{i}"));
        }
        foreach (var duplicate in rules.GroupBy(r => r.Name, StringComparer.Ordinal).Where(g => g.Count() > 1 && g.Key.Length > 0))
        {
            errors.Add(new("Alerts", $"two rules are named '{duplicate.Key}'", "Give each rule its own name"));
        }
        return errors;
    }
}
