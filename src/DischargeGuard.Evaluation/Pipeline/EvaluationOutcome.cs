using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>What went wrong with a request, field by field, and which kind of problem it is.</summary>
public enum ProblemKind
{
    /// <summary>The request is malformed or names unknown things (400).</summary>
    InvalidRequest,

    /// <summary>The request is well formed but physically impossible or outside the data's range (422).</summary>
    Unprocessable,
}

/// <summary>A refused request: its kind, a stable error code, a title and the errors keyed by request path.</summary>
/// <param name="Kind">400 or 422.</param>
/// <param name="Code">Stable error code (e.g. <c>out-of-range</c>).</param>
/// <param name="Title">One-line summary.</param>
/// <param name="Errors">Messages keyed by request path, e.g. <c>stages[0].discharge.pressure</c>.</param>
public sealed record RequestProblem(ProblemKind Kind, string Code, string Title, IReadOnlyDictionary<string, string[]> Errors);

/// <summary>The result of the pipeline: a response, or a problem.</summary>
public sealed record EvaluationOutcome
{
    private EvaluationOutcome(EvaluationResponse? response, RequestProblem? problem)
    {
        Response = response;
        Problem = problem;
    }

    /// <summary>The answer, when the request could be evaluated.</summary>
    public EvaluationResponse? Response { get; }

    /// <summary>The problem, when it could not.</summary>
    public RequestProblem? Problem { get; }

    /// <summary>A successful evaluation.</summary>
    public static EvaluationOutcome Success(EvaluationResponse response) => new(response, null);

    /// <summary>A refused request.</summary>
    public static EvaluationOutcome Refused(RequestProblem problem) => new(null, problem);
}

/// <summary>Thrown inside the pipeline to refuse a request; caught and turned into an <see cref="EvaluationOutcome"/>.</summary>
internal sealed class RequestProblemException : Exception
{
    public RequestProblemException(RequestProblem problem)
        : base(problem.Title) => Problem = problem;

    public RequestProblemException()
    {
        Problem = new RequestProblem(ProblemKind.InvalidRequest, "invalid-request", "Invalid request.", new Dictionary<string, string[]>());
    }

    public RequestProblemException(string message)
        : base(message)
    {
        Problem = new RequestProblem(ProblemKind.InvalidRequest, "invalid-request", message, new Dictionary<string, string[]>());
    }

    public RequestProblemException(string message, Exception innerException)
        : base(message, innerException)
    {
        Problem = new RequestProblem(ProblemKind.InvalidRequest, "invalid-request", message, new Dictionary<string, string[]>());
    }

    public RequestProblem Problem { get; }

    public static RequestProblemException Field(ProblemKind kind, string code, string title, string path, string message) =>
        new(new RequestProblem(kind, code, title, new Dictionary<string, string[]> { [path] = [message] }));
}
