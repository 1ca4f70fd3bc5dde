import type { ReactNode } from 'react';
import { AdminNav } from '@/components/admin/AdminNav';
import { requireRole } from '@/lib/auth/guard';

export default async function AdminLayout({ children }: { children: ReactNode }) {
  await requireRole('admin');
  return (
    <div className="space-y-4">
      <AdminNav />
      {children}
    </div>
  );
}
