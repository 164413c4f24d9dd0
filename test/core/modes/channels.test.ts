import { describe, expect, it } from 'vitest';
import { assignChannels, channelShape, synthTrace } from '../../../src/core/modes/index.js';

describe('channelShape(values) / assignChannels(columns)', () => {
  const s = synthTrace({ seed: 2 });
  it('tells the photodiode, the sawtooth ramp and a gate trigger apart', () => {
    expect(channelShape(s.signalV).role).toBe('signal');
    expect(channelShape(s.rampV).role).toBe('ramp');
    expect(channelShape(s.triggerV).role).toBe('trigger');
  });
  it('takes a short sync pulse for a trigger, and assigns roles in any column order', () => {
    const pulse = Float64Array.from(s.timeS, (t) => ((t + 0.002) % 0.02 < 0.0002 ? 5 : 0));
    expect(channelShape(pulse).role).toBe('trigger');
    expect(assignChannels([s.rampV, pulse, s.signalV])).toMatchObject({ signal: 2, ramp: 0, trigger: 1 });
    expect(assignChannels([s.rampV, s.signalV], { signal: 0 })).toMatchObject({ signal: 0 });
  });
});
