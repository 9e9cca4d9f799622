import { UploadScreen } from '@client/features/uploads/components/upload-screen';

/** /upload: send waveform files by hand. */
export function UploadRoute() {
  return <UploadScreen />;
}
