/**
 * Saves what a chart drew: the SVG recharts rendered, serialised with its computed text style inlined so the file
 * looks the same outside the page, or the same picture rasterised through a canvas as PNG.
 */
function download(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const link = document.createElement('a');
  link.href = url;
  link.download = fileName;
  document.body.appendChild(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

function serialise(container: HTMLElement, title: string): { text: string; width: number; height: number } | null {
  const svg = container.querySelector('svg.recharts-surface') ?? container.querySelector('svg');
  if (!svg) return null;
  const clone = svg.cloneNode(true) as SVGSVGElement;
  const box = svg.getBoundingClientRect();
  const width = Math.round(box.width) || Number(svg.getAttribute('width')) || 800;
  const height = Math.round(box.height) || Number(svg.getAttribute('height')) || 300;
  clone.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  clone.setAttribute('width', String(width));
  clone.setAttribute('height', String(height));
  clone.setAttribute('font-family', getComputedStyle(container).fontFamily || 'sans-serif');
  clone.setAttribute('font-size', '12');
  const background = document.createElementNS('http://www.w3.org/2000/svg', 'rect');
  background.setAttribute('width', '100%');
  background.setAttribute('height', '100%');
  // the page's card colour, read from the theme so a saved chart sits on the same ground as on screen
  background.setAttribute('fill', getComputedStyle(document.documentElement).getPropertyValue('--color-card').trim() || 'white');
  clone.insertBefore(background, clone.firstChild);
  const heading = document.createElementNS('http://www.w3.org/2000/svg', 'title');
  heading.textContent = title;
  clone.insertBefore(heading, clone.firstChild);
  return { text: new XMLSerializer().serializeToString(clone), width, height };
}

export function saveSvg(container: HTMLElement, title: string, fileName: string): boolean {
  const svg = serialise(container, title);
  if (!svg) return false;
  download(new Blob([svg.text], { type: 'image/svg+xml' }), `${fileName}.svg`);
  return true;
}

export async function savePng(container: HTMLElement, title: string, fileName: string): Promise<boolean> {
  const svg = serialise(container, title);
  if (!svg) return false;
  const scale = 2;
  const image = new Image();
  const url = URL.createObjectURL(new Blob([svg.text], { type: 'image/svg+xml' }));
  try {
    await new Promise<void>((resolve, reject) => {
      image.onload = () => resolve();
      image.onerror = () => reject(new Error('The chart could not be drawn as an image.'));
      image.src = url;
    });
    const canvas = document.createElement('canvas');
    canvas.width = svg.width * scale;
    canvas.height = svg.height * scale;
    const context = canvas.getContext('2d');
    if (!context) return false;
    context.scale(scale, scale);
    context.drawImage(image, 0, 0);
    const blob = await new Promise<Blob | null>((resolve) => canvas.toBlob(resolve, 'image/png'));
    if (!blob) return false;
    download(blob, `${fileName}.png`);
    return true;
  } finally {
    URL.revokeObjectURL(url);
  }
}
