#!/usr/bin/env bash
# Regenerates this example's INVENTED data file(s) with the small C# tool in tests/ExampleData.
# The generated files are committed, so the example builds without running this.
set -euo pipefail
root="$(cd "$(dirname "$0")/../.." && pwd)"
dotnet run --project "$root/tests/ExampleData" -- "$root/examples"
