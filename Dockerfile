# syntax=docker/dockerfile:1
#
# DischargeGuard service image: build with the SDK, run on the ASP.NET Core runtime as a non-root user.
#
#   docker build -t dischargeguard:0.1.0 .
#   docker run --read-only --tmpfs /tmp -p 8080:8080 \
#     -v "$PWD/rules:/rules:ro" -v dischargeguard-data:/data \
#     -e Auth__Keys__0__id=tablet-07 -e Auth__Keys__0__sha256=<hash from new-key> -e Auth__Keys__0__roles__0=technician \
#     dischargeguard:0.1.0
#
# Writable: /data only (the SQLite audit file and the log files), plus /tmp as a tmpfs for the runtime.
# Rules: mounted read-only at /rules (see docs/deploy.md). Configuration: environment variables, '__' for ':'.
# scripts/verify-container.sh runs each step below outside Docker (no engine runs on the build machines).

############################ build ############################
FROM mcr.microsoft.com/dotnet/sdk:10.0 AS build
WORKDIR /src

# global.json is left out on purpose: it pins the repository's SDK feature band for developers, and the sdk:10.0
# image may carry an earlier band of the same 10.0 SDK; the runtime the output targets is the same.
# .editorconfig is copied because the analyzers read it and warnings are errors.
COPY Directory.Build.props Directory.Packages.props .editorconfig ./

# Project files first, so the restore layer is reused until a reference or a package version changes.
COPY src/DischargeGuard.Api/DischargeGuard.Api.csproj src/DischargeGuard.Api/
COPY src/DischargeGuard.Evaluation/DischargeGuard.Evaluation.csproj src/DischargeGuard.Evaluation/
COPY src/DischargeGuard.Audit/DischargeGuard.Audit.csproj src/DischargeGuard.Audit/
COPY src/DischargeGuard.Rules/DischargeGuard.Rules.csproj src/DischargeGuard.Rules/
COPY src/DischargeGuard.Thermo/DischargeGuard.Thermo.csproj src/DischargeGuard.Thermo/
RUN dotnet restore src/DischargeGuard.Api/DischargeGuard.Api.csproj

COPY src/ src/
COPY rules/ rules/
# UseAppHost=false: the image starts the service with `dotnet DischargeGuard.Api.dll`, so no native launcher is needed.
RUN dotnet publish src/DischargeGuard.Api/DischargeGuard.Api.csproj -c Release -o /app --no-restore -p:UseAppHost=false

############################ runtime ############################
FROM mcr.microsoft.com/dotnet/aspnet:10.0 AS runtime
WORKDIR /app

# The application files belong to root and are not writable by the service's user.
COPY --from=build /app/ /app/

# The service writes its logs under <content root>/data/logs and, by default, its SQLite file under
# <content root>/data. The content root stays /app (appsettings.json is read from there) and /app/data points at
# the data volume, so every write lands on /data and the root filesystem can be mounted read-only.
RUN mkdir -p /data/logs /rules \
    && ln -s /data /app/data \
    && chown -R 1654:1654 /data \
    && chmod 0750 /data

ENV ASPNETCORE_CONTENTROOT=/app \
    Urls=http://+:8080 \
    DischargeGuard__RulesDirectory=/rules \
    DischargeGuard__Replicas=1 \
    Audit__Provider=sqlite \
    Audit__SqlitePath=/data/audit.db \
    DOTNET_NOLOGO=1 \
    DOTNET_CLI_TELEMETRY_OPTOUT=1

# The aspnet image's `app` user, by number so an orchestrator can check runAsNonRoot without a passwd lookup.
USER 1654:1654

VOLUME ["/data"]
EXPOSE 8080

# The runtime image has no curl or wget: the service itself probes readiness (exit 0 ready, 1 otherwise).
# The port must follow Urls if that is changed.
HEALTHCHECK --interval=30s --timeout=5s --start-period=30s --retries=3 \
    CMD ["dotnet", "/app/DischargeGuard.Api.dll", "--probe", "http://127.0.0.1:8080/health/ready"]

ENTRYPOINT ["dotnet", "/app/DischargeGuard.Api.dll"]
