import { describe, expect, it } from 'vitest';
import { runCellsInWorkers } from '../../server/tomography/pool';
import { fitSightline } from '../../server/science/tomography/fit';
import { oneCloudField, twoCloudField } from '../science/tomography/fields';

describe('worker pool', () => {
  it('gives the same results as fitting in-process, in input order', async () => {
    const cells = Array.from({ length: 12 }, (_, i) => ({
      cellId: `pool-${i}`,
      stars: (i % 2 ? twoCloudField(i) : oneCloudField(i)).stars,
    }));
    const progress: number[] = [];
    const results = await runCellsInWorkers(cells, { draws: 20 }, (p) => progress.push(p.cellsDone), { threads: 2, chunkSize: 3 });
    expect(results).toHaveLength(12);
    for (let i = 0; i < cells.length; i++) {
      const direct = fitSightline(cells[i].stars, { draws: 20, cellId: cells[i].cellId });
      expect(JSON.stringify(results[i])).toBe(JSON.stringify(direct));
    }
    expect(progress[progress.length - 1]).toBe(12);
  }, 60_000);

  it('reports a worker error instead of hanging', async () => {
    const bad = [{ cellId: 'bad', stars: [{ ...oneCloudField(0).stars[0], uErr: -1 }] }];
    await expect(runCellsInWorkers(bad, { draws: 1 }, undefined, { threads: 1 })).rejects.toThrow(/uErr = -1/);
  }, 60_000);
});
