// Fewer points for drawing a long run: largest-triangle-three-buckets (Steinarsson 2013, "Downsampling Time Series
// for Visual Representation", University of Iceland MSc thesis), which keeps the shape (including a sharp break)
// far better than taking every n-th point.
export interface XY {
  x: number;
  y: number;
}

export function downsampleLTTB<T extends XY>(data: readonly T[], threshold: number): T[] {
  const n = data.length;
  if (threshold >= n || threshold < 3) return data.slice();
  const out: T[] = [data[0]];
  const every = (n - 2) / (threshold - 2);
  let a = 0;
  for (let i = 0; i < threshold - 2; i++) {
    // Average of the next bucket is the third corner of the triangle.
    const nextStart = Math.floor((i + 1) * every) + 1;
    const nextEnd = Math.min(Math.floor((i + 2) * every) + 1, n);
    let avgX = 0;
    let avgY = 0;
    for (let j = nextStart; j < nextEnd; j++) {
      avgX += data[j].x;
      avgY += data[j].y;
    }
    const count = Math.max(1, nextEnd - nextStart);
    avgX /= count;
    avgY /= count;
    const start = Math.floor(i * every) + 1;
    const end = Math.floor((i + 1) * every) + 1;
    let best = start;
    let bestArea = -1;
    for (let j = start; j < end; j++) {
      const area = Math.abs((data[a].x - avgX) * (data[j].y - data[a].y) - (data[a].x - data[j].x) * (avgY - data[a].y));
      if (area > bestArea) {
        bestArea = area;
        best = j;
      }
    }
    out.push(data[best]);
    a = best;
  }
  out.push(data[n - 1]);
  return out;
}
