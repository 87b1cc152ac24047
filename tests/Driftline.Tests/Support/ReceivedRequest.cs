namespace Driftline.Tests.Support;

/// <summary>One request a <see cref="LoopbackReceiver"/> took.</summary>
internal sealed record ReceivedRequest(string Method, string? ContentType, string? IdempotencyKey, string Body);
