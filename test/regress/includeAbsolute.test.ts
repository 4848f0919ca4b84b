import { describe, expect, it } from 'vitest';
import { fileLoader, memoryIo } from '../../cli/io.js';

describe('include with an absolute path', () => {
  it('reads the file at that path, not one under the including file\'s folder (found by a fresh-eyes run: "/abs/x.tube" became "dir/abs/x.tube")', () => {
    const files: Record<string, string> = { '/abs/types.tube': 'rail bp = 24 V\n', 'work/types.tube': 'rail other = 1 V\n' };
    const { io } = memoryIo((p) => {
      if (p in files) return files[p]!;
      throw new Error('no such file');
    });
    const load = fileLoader(io);
    expect(load('/abs/types.tube', 'work/main.tube')).toEqual({ file: '/abs/types.tube', text: 'rail bp = 24 V\n' });
    expect(load('types.tube', 'work/main.tube')).toEqual({ file: 'work/types.tube', text: 'rail other = 1 V\n' });
  });
});
