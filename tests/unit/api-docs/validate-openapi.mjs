// Validates the OpenAPI document read from stdin with @seriousme/openapi-schema-validator
// and prints { valid, version, errors } as JSON. A separate ESM process, because the
// validator is an ES module that finds its schemas through import.meta.url, which
// jest's CommonJS transform cannot run.
import { Validator } from "@seriousme/openapi-schema-validator";

let input = "";
process.stdin.setEncoding("utf8");
for await (const chunk of process.stdin) input += chunk;
const validator = new Validator();
const result = await validator.validate(JSON.parse(input));
process.stdout.write(JSON.stringify({ valid: result.valid, version: validator.version, errors: result.errors ?? null }));
