'use client';

import { useRouter } from 'next/navigation';
import { useRef, useState, type DragEvent } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import { formatBytes } from './api-client';
import { ProgressBar } from './status-badge';

type Phase = { kind: 'idle' } | { kind: 'sending'; sent: number; total: number } | { kind: 'checking' } | { kind: 'error'; message: string };

/**
 * Drag-and-drop (or pick) one GDSII or polygon CSV file and send it with XMLHttpRequest, whose upload progress
 * events drive the bar. The server recognises the format from the content and checks the whole file.
 */
export function UploadForm({ projectId, maxBytes, maxLabel }: { projectId: string; maxBytes: number; maxLabel: string }) {
  const router = useRouter();
  const input = useRef<HTMLInputElement>(null);
  const [file, setFile] = useState<File | null>(null);
  const [name, setName] = useState('');
  // The name follows the chosen file until the user types one, so picking a second file never keeps the first's name.
  const [nameTyped, setNameTyped] = useState(false);
  const [note, setNote] = useState('');
  const [over, setOver] = useState(false);
  const [phase, setPhase] = useState<Phase>({ kind: 'idle' });
  const [fieldErrors, setFieldErrors] = useState<Record<string, string[]>>({});

  const choose = (f: File | null | undefined) => {
    if (!f) return;
    setFile(f);
    setPhase({ kind: 'idle' });
    if (!nameTyped || !name.trim()) setName(f.name.replace(/\.[^.]*$/, ''));
  };
  const onDrop = (e: DragEvent) => {
    e.preventDefault();
    setOver(false);
    choose(e.dataTransfer.files[0]);
  };

  const submit = () => {
    if (!file) {
      setFieldErrors({ file: ['Choose a layout file.'] });
      return;
    }
    if (file.size > maxBytes) {
      setPhase({ kind: 'error', message: `${file.name} is ${formatBytes(file.size)}, over the upload limit of ${maxLabel}.` });
      return;
    }
    setFieldErrors({});
    const form = new FormData();
    if (name.trim()) form.set('name', name.trim());
    if (note.trim()) form.set('note', note.trim());
    form.set('file', file);
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api/v1/projects/${projectId}/layouts`);
    xhr.responseType = 'json';
    xhr.upload.onprogress = (e) => setPhase({ kind: 'sending', sent: e.loaded, total: e.lengthComputable ? e.total : file.size });
    xhr.upload.onload = () => setPhase({ kind: 'checking' });
    xhr.onerror = () => setPhase({ kind: 'error', message: 'The upload was interrupted (network error). Nothing was stored; try again.' });
    xhr.onload = () => {
      const body = xhr.response as { revision?: { id: string }; error?: { message: string; fieldErrors?: Record<string, string[]> } } | null;
      if (xhr.status === 201 && body?.revision) {
        router.push(`/projects/${projectId}/analyses/new?revision=${body.revision.id}`);
        return;
      }
      setFieldErrors(body?.error?.fieldErrors ?? {});
      setPhase({ kind: 'error', message: body?.error?.message ?? `Upload failed (${xhr.status}).` });
    };
    setPhase({ kind: 'sending', sent: 0, total: file.size });
    xhr.send(form);
  };

  const busy = phase.kind === 'sending' || phase.kind === 'checking';
  return (
    <div className="space-y-5" data-testid="upload-form">
      <div
        role="button"
        tabIndex={0}
        onClick={() => input.current?.click()}
        onKeyDown={(e) => (e.key === 'Enter' || e.key === ' ' ? input.current?.click() : undefined)}
        onDragOver={(e) => {
          e.preventDefault();
          setOver(true);
        }}
        onDragLeave={() => setOver(false)}
        onDrop={onDrop}
        data-testid="drop-zone"
        className={`flex cursor-pointer flex-col items-center justify-center rounded-lg border-2 border-dashed px-6 py-10 text-center transition-colors ${
          over ? 'border-copper-500 bg-copper-300/10' : fieldErrors.file ? 'border-fail/60 bg-fail/5' : 'border-wafer-300 bg-wafer-50 hover:border-copper-400'
        }`}
      >
        <p className="text-sm font-medium text-ink-800">{file ? file.name : 'Drop a layout file here, or click to choose one'}</p>
        <p className="mt-1 text-xs text-ink-500">
          {file ? formatBytes(file.size) : `GDSII stream (.gds) or Trenchant polygon CSV · up to ${maxLabel} · the format is read from the content`}
        </p>
        <input ref={input} type="file" name="file" className="sr-only" data-testid="file-input" onChange={(e) => choose(e.target.files?.[0])} />
      </div>
      {fieldErrors.file ? <p className="text-xs text-fail">{fieldErrors.file.join(' ')}</p> : null}
      <Field label="Layout name" name="name" value={name} onChange={(e) => {
          setName(e.target.value);
          setNameTyped(true);
        }} errors={fieldErrors.name} hint="Uploading under an existing name adds a new revision of that layout." />
      <Field label="Note (optional)" name="note" value={note} onChange={(e) => setNote(e.target.value)} errors={fieldErrors.note} placeholder="What changed in this revision" />
      {phase.kind === 'sending' ? (
        <div className="space-y-1.5" data-testid="upload-progress">
          <ProgressBar value={phase.total > 0 ? phase.sent / phase.total : 0} label="upload progress" />
          <p className="font-mono text-xs text-ink-500">
            {formatBytes(phase.sent)} of {formatBytes(phase.total)} sent
          </p>
        </div>
      ) : null}
      {phase.kind === 'checking' ? <p className="text-sm text-ink-700" data-testid="upload-checking">Upload complete — reading the whole file to check it and list its layers…</p> : null}
      {phase.kind === 'error' ? <FormAlert message={phase.message} /> : null}
      <Button type="button" onClick={submit} disabled={busy} data-testid="upload-submit">
        {busy ? 'Uploading…' : 'Upload'}
      </Button>
    </div>
  );
}
