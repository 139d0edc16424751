// Writes docs/analysis-json.schema.json: the JSON Schema of `intradyne analyze --json`, made from
// the figure lists of @intradyne/io (run after a build; a test checks that the committed file is
// what this writes).
import { writeFileSync } from 'node:fs';
import { analysisJsonSchema } from '../packages/io/dist/index.js';

const path = new URL('../docs/analysis-json.schema.json', import.meta.url);
writeFileSync(path, `${JSON.stringify(analysisJsonSchema(), null, 2)}\n`);
console.log(`wrote ${path.pathname.split('/').slice(-2).join('/')}`);
