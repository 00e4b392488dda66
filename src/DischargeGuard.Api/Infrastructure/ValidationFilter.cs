using FluentValidation;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// Runs the FluentValidation validator of <typeparamref name="T"/> on the bound argument and answers 400 with the
/// errors field by field; attached only to endpoints whose DTO has a validator.
/// </summary>
internal sealed class ValidationFilter<T>(IValidator<T> validator) : IEndpointFilter
    where T : class
{
    public async ValueTask<object?> InvokeAsync(EndpointFilterInvocationContext context, EndpointFilterDelegate next)
    {
        var argument = context.Arguments.OfType<T>().FirstOrDefault();
        if (argument is null)
        {
            return Problems.Validation(new Dictionary<string, string[]> { [string.Empty] = ["The request body is empty; send a JSON document."] });
        }

        var result = await validator.ValidateAsync(argument, context.HttpContext.RequestAborted).ConfigureAwait(false);
        return result.IsValid ? await next(context).ConfigureAwait(false) : Problems.Validation(result.Errors);
    }
}

internal static class ValidationFilterExtensions
{
    public static RouteHandlerBuilder WithValidation<T>(this RouteHandlerBuilder builder)
        where T : class =>
        builder.AddEndpointFilter<ValidationFilter<T>>().ProducesValidationProblem();
}
