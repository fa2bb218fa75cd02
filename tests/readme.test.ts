import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';

describe('the README', () => {
  it('shows the library code of examples/first-look.ts verbatim, so the snippet stays runnable', () => {
    const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
    const example = readFileSync(new URL('../examples/first-look.ts', import.meta.url), 'utf8')
      .split('\n')
      .slice(1)
      .join('\n');
    expect(readme).toContain(`\`\`\`ts\n${example}\`\`\``);
  });

  it('shows the library code of examples/pairs-look.ts verbatim (encoder-decoders, attention, threads)', () => {
    const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
    const example = readFileSync(new URL('../examples/pairs-look.ts', import.meta.url), 'utf8')
      .split('\n')
      .slice(1)
      .join('\n');
    expect(readme).toContain(`\`\`\`ts\n${example}\`\`\``);
  });

  it('shows the plan of examples/custom-cell/mgu-plan.ts verbatim, the cell the command test trains and ships', () => {
    const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
    const example = readFileSync(new URL('../examples/custom-cell/mgu-plan.ts', import.meta.url), 'utf8');
    expect(readme).toContain(`\`\`\`ts\n${example}\`\`\``);
  });

  it('opens with the job and gives the two setup commands', () => {
    const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
    expect(readme.split('\n')[2]).toMatch(/^weft is a TypeScript library for training and running small gated recurrent networks/);
    expect(readme).toContain('npm ci && npm run demo');
    expect(readme).toContain('npm test ');
    expect(readme).toMatch(/## Caution\n\nModels trained with weft produce estimates\./);
  });
});
