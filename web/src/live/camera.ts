/** The camera: one shared stream (the spectrum and polarization benches both look through it). */
export interface CameraState {
  stream: MediaStream | null;
  deviceId: string | null;
  label: string;
}

type Listener = (state: CameraState) => void;

export class Camera {
  readonly video: HTMLVideoElement;
  private state: CameraState = { stream: null, deviceId: null, label: '' };
  private listeners = new Set<Listener>();

  constructor() {
    this.video = document.createElement('video');
    this.video.muted = true;
    this.video.playsInline = true;
    this.video.setAttribute('aria-label', 'camera view');
  }

  get running(): boolean {
    return this.state.stream !== null;
  }

  get current(): CameraState {
    return this.state;
  }

  onChange(listener: Listener): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /** Starts the camera (a specific one when `deviceId` is given), asking for 1280×720 — enough for a grating band. */
  async start(deviceId?: string): Promise<void> {
    if (!navigator.mediaDevices?.getUserMedia) {
      throw new Error('this browser gives no camera access here (the page must be opened as http://localhost or over https)');
    }
    this.stop();
    const stream = await navigator.mediaDevices.getUserMedia({
      audio: false,
      video: {
        ...(deviceId ? { deviceId: { exact: deviceId } } : { facingMode: 'environment' }),
        width: { ideal: 1280 },
        height: { ideal: 720 },
      },
    });
    this.video.srcObject = stream;
    await this.video.play();
    const track = stream.getVideoTracks()[0];
    this.state = { stream, deviceId: track?.getSettings().deviceId ?? deviceId ?? null, label: track?.label ?? 'camera' };
    this.emit();
  }

  stop(): void {
    this.state.stream?.getTracks().forEach((t) => t.stop());
    this.video.srcObject = null;
    this.state = { stream: null, deviceId: null, label: '' };
    this.emit();
  }

  async devices(): Promise<MediaDeviceInfo[]> {
    if (!navigator.mediaDevices?.enumerateDevices) return [];
    return (await navigator.mediaDevices.enumerateDevices()).filter((d) => d.kind === 'videoinput');
  }

  private emit(): void {
    for (const l of this.listeners) l(this.state);
  }
}

/** Calls `onFrame` once per new video frame (requestVideoFrameCallback where the browser has it). Returns a stop function. */
export function eachVideoFrame(video: HTMLVideoElement, onFrame: (nowMs: number) => void): () => void {
  let stopped = false;
  const v = video as HTMLVideoElement & { requestVideoFrameCallback?: (cb: (now: number) => void) => number };
  if (typeof v.requestVideoFrameCallback === 'function') {
    const loop = (now: number): void => {
      if (stopped) return;
      onFrame(now);
      v.requestVideoFrameCallback!(loop);
    };
    v.requestVideoFrameCallback(loop);
  } else {
    const loop = (now: number): void => {
      if (stopped) return;
      onFrame(now);
      requestAnimationFrame(loop);
    };
    requestAnimationFrame(loop);
  }
  return () => {
    stopped = true;
  };
}
