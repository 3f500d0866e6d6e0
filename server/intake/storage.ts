import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';

/** Uploaded files are kept as received, content-addressed by their sha256, under dataDir/uploads. */
export async function storeUpload(tmpPath: string, dataDir: string): Promise<{ sha256: string; sizeBytes: number; storedPath: string }> {
  const hash = crypto.createHash('sha256');
  let size = 0;
  await new Promise<void>((resolve, reject) => {
    fs.createReadStream(tmpPath)
      .on('data', (c) => {
        hash.update(c);
        size += c.length;
      })
      .on('end', () => resolve())
      .on('error', reject);
  });
  const sha256 = hash.digest('hex');
  const dir = path.join(dataDir, 'uploads', sha256.slice(0, 2));
  fs.mkdirSync(dir, { recursive: true });
  const storedPath = path.join(dir, `${sha256}.csv`);
  if (fs.existsSync(storedPath)) fs.rmSync(tmpPath, { force: true });
  else fs.renameSync(tmpPath, storedPath);
  return { sha256, sizeBytes: size, storedPath };
}
