#!/usr/bin/env bash
# Checks the package's out-of-date check for committed generated files (build/DerivGen.targets) the way a user meets
# it: a fresh project outside the repository, whose only reference is the packed DerivGen package, keeps DerivGen's
# generated files in a tracked folder (DerivGenCommittedSourcesPath=Generated).
#
#   usage: scripts/check-committed-sources.sh FEED_DIR   (FEED_DIR holds DerivGen.<version>.nupkg, e.g. from dotnet pack -o)
#
# 1. An ordinary build writes Generated/<Namespace>.<Type>.<Method>.g.cs (update mode).
# 2. With obj/ and bin/ deleted (as in a fresh clone), a build with DerivGenCheckCommittedSources=true passes.
# 3. One coefficient of the loss is edited, another method's committed file is deleted and a stale file is added:
#    the checking build fails with error DGB001 for each of the three, and leaves Generated/ untouched.
# 4. An ordinary build brings Generated/ back in line (rewrites, adds, deletes).
# 5. DerivGenCheckCommittedSources=true without DerivGenCommittedSourcesPath is a configuration error (DGB002).
set -euo pipefail

feed="$(cd "${1:?usage: check-committed-sources.sh FEED_DIR}" && pwd)"
here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
repo="$(cd "$here/.." && pwd)"

shopt -s nullglob
packages=("$feed"/DerivGen.[0-9]*.nupkg)
shopt -u nullglob
if [[ ${#packages[@]} -ne 1 ]]; then
    echo "Expected exactly one DerivGen.<version>.nupkg in $feed, found ${#packages[@]}."
    exit 1
fi
version="$(basename "${packages[0]}" .nupkg)"
version="${version#DerivGen.}"

scratch="$(mktemp -d "${TMPDIR:-/tmp}/derivgen-tracked.XXXXXX")"
trap 'rm -rf "$scratch"' EXIT
case "$scratch/" in
    "$repo"/*) echo "The scratch folder $scratch is inside the repository; set TMPDIR elsewhere."; exit 1 ;;
esac

export NUGET_PACKAGES="$scratch/nuget-packages"
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1 DOTNET_SKIP_FIRST_TIME_EXPERIENCE=1
# This script decides the mode itself; a CI=true from the environment must not switch a project into check mode.
unset CI

echo '<Project />' > "$scratch/Directory.Build.props"
echo '<Project />' > "$scratch/Directory.Build.targets"
echo '<Project />' > "$scratch/Directory.Packages.props"
cat > "$scratch/nuget.config" <<XML
<?xml version="1.0" encoding="utf-8"?>
<configuration>
  <packageSources>
    <clear />
    <add key="local-derivgen" value="$feed" />
    <add key="nuget.org" value="https://api.nuget.org/v3/index.json" protocolVersion="3" />
  </packageSources>
</configuration>
XML

project="$scratch/Tracked"
mkdir -p "$project"
cat > "$project/Tracked.csproj" <<XML
<Project Sdk="Microsoft.NET.Sdk">
  <PropertyGroup>
    <TargetFramework>net10.0</TargetFramework>
    <Nullable>enable</Nullable>
    <TreatWarningsAsErrors>true</TreatWarningsAsErrors>
    <DerivGenCommittedSourcesPath>Generated</DerivGenCommittedSourcesPath>
  </PropertyGroup>
  <ItemGroup>
    <PackageReference Include="DerivGen" Version="$version" />
  </ItemGroup>
</Project>
XML
# Invented losses: a six-term weighted sum of squares, and a small second method.
cat > "$project/Losses.cs" <<'CS'
using System;
using DerivGen;

namespace Tracked;

public static partial class Losses
{
    [Differentiate(nameof(a), nameof(b))]
    public static double Six(double a, double b) =>
        1.5 * (a - 1) * (a - 1) + 0.5 * (b + 2) * (b + 2) + 0.25 * Math.Sin(a * b)
        + 2.0 * Math.Exp(-a * a) + 0.75 * Math.Cos(b) + 0.125 * a * b;

    [Differentiate]
    public static double Small(double u) => u * u * u;
}
CS

generated="$project/Generated"
six="$generated/Tracked.Losses.Six.g.cs"
small="$generated/Tracked.Losses.Small.g.cs"
log="$scratch/build.log"

build() { # $@ = extra arguments; output in $log, exit code returned
    set +e
    dotnet build "$project" -c Release "$@" > "$log" 2>&1
    local rc=$?
    set -e
    return $rc
}

fail() {
    echo "FAILED: $1"
    echo "--- build output ---"
    tail -n 40 "$log"
    exit 1
}

echo "1. an ordinary build writes the committed folder (DerivGen $version from $feed)"
build || fail "the first build failed"
[[ -f "$six" && -f "$small" ]] || fail "Generated/ does not hold both generated files: $(ls "$generated" 2>/dev/null || true)"
grep -q "DerivGen: updated 'Generated': 0 changed, 2 added, 0 removed" "$log" || fail "no 'updated' message"
grep -q "∂Six/∂a" "$six" || fail "the committed file has no readable formula header"
echo "   wrote $(basename "$six") and $(basename "$small")"

echo "2. from a fresh clone (no obj/, no bin/), the checking build passes"
rm -rf "$project/obj" "$project/bin"
build -p:DerivGenCheckCommittedSources=true || fail "the checking build failed although the files are in step"
grep -q "DerivGen: the committed generated files in 'Generated' are up to date (2 file(s))" "$log" || fail "no 'up to date' message"
echo "   up to date"

echo "3. a loss edited without committing its derivatives fails the checking build with DGB001"
sed -i 's/1.5 \* (a - 1) \* (a - 1)/1.6 * (a - 1) * (a - 1)/' "$project/Losses.cs"
grep -q "1.6 \* (a - 1)" "$project/Losses.cs" || fail "the edit of the loss did not apply"
cp "$six" "$scratch/six-before.g.cs"
rm "$small"
echo "// a file of a method that no longer exists" > "$generated/Tracked.Losses.Removed.g.cs"
if build --no-restore -p:DerivGenCheckCommittedSources=true; then
    fail "the checking build passed although the committed files are out of date"
fi
for expected in "Tracked.Losses.Six.g.cs' is out of date" \
                "Tracked.Losses.Small.g.cs' is not committed" \
                "Tracked.Losses.Removed.g.cs' in 'Generated' is no longer generated"; do
    grep -q "error DGB001: .*$expected" "$log" || fail "no DGB001 error saying: $expected"
done
grep "error DGB001" "$log" | sed 's/^.*error DGB001: /   DGB001: /; s/ \[.*$//' | sort -u
cmp -s "$six" "$scratch/six-before.g.cs" || fail "the checking build modified the committed file"
[[ ! -f "$small" && -f "$generated/Tracked.Losses.Removed.g.cs" ]] || fail "the checking build changed Generated/"

echo "4. an ordinary build brings the committed folder back in line"
build --no-restore || fail "the updating build failed"
grep -q "DerivGen: updated 'Generated': 1 changed, 1 added, 1 removed" "$log" || fail "no 'updated: 1 changed, 1 added, 1 removed' message"
[[ -f "$small" && ! -f "$generated/Tracked.Losses.Removed.g.cs" ]] || fail "Generated/ was not brought in line"
! cmp -s "$six" "$scratch/six-before.g.cs" || fail "the edited loss's file was not rewritten"
changed_lines="$({ diff "$scratch/six-before.g.cs" "$six" || true; } | grep -c '^[<>]' || true)"
echo "   lines removed + added in the edited loss's file: $changed_lines"
[[ "$changed_lines" -gt 0 ]] || fail "the diff of the edited loss's file is empty"


echo "5. checking without naming the folder is a configuration error (DGB002)"
if build --no-restore -p:DerivGenCheckCommittedSources=true -p:DerivGenCommittedSourcesPath=; then
    fail "the build passed without DerivGenCommittedSourcesPath"
fi
grep -q "error DGB002" "$log" || fail "no DGB002 error"

echo
echo "Committed-sources check passed."
