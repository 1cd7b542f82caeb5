# Pesan halaman-halaman server (lihat en/pages.ftl).

## Tata letak
menu-main = Utama
menu-events = Kejadian
menu-import = Impor
menu-trips = Perjalanan
menu-station = Unggah di stasiun
menu-dashboard = Dasbor
menu-disputes = Perselisihan
signed-in-as = Masuk sebagai
log-out = Keluar
not-signed-in = Belum masuk
language-switch = Bahasa
language-switch-button = Ganti

## Peringatan keselamatan
footer-safety-title = Utamakan keselamatan
footer-safety-approach = Jangan mendekati pembukaan lahan yang sedang berlangsung, alat berat, atau orang bersenjata.
footer-safety-approach-more = Amati dari jarak aman, catat yang bisa dicatat, lalu pergi. "Tidak tercapai: keselamatan" adalah laporan yang baik.
footer-safety-protocol = Ikuti protokol keselamatan organisasi Anda dan hukum setempat (izin, akses lahan, rencana perjalanan, jam lapor).
footer-safety-consent = Foto orang memerlukan persetujuan mereka. Foto lahannya, bukan orangnya.
footer-safety-evidence = Bukti untuk perkara hukum mengikuti aturan setempat dan praktik tenaga berizin. Groundproof menyimpan foto tanpa diubah dan dikenali dari isinya, tetapi bukan sistem lacak balak (chain of custody).
footer-safety-sensitive = Paket dan kiriman balik berisi lokasi kegiatan yang mungkin ilegal: perlakukan sebagai rahasia.

## Masuk
login-title = Masuk
login-intro = Masuk untuk menindaklanjuti peringatan deforestasi.
login-name = Nama pengguna
login-password = Kata sandi
login-button = Masuk
login-note = Kerja lapangan bisa berbahaya: jangan mendekati kegiatan yang sedang berlangsung atau orang bersenjata, dan ikuti protokol keselamatan organisasi Anda serta hukum setempat.
login-bad-credentials = Nama pengguna dan kata sandi itu tidak cocok.
login-locked = Terlalu banyak percobaan gagal: tunggu 15 menit lalu coba lagi.
login-failed = Gagal masuk; lihat log server.
login-session-ended = Sesi Anda sudah berakhir (waktunya habis, atau Anda keluar di tempat lain). Masuk lagi; kiriman terakhir Anda tidak tersimpan.

## Halaman galat
error-back = Kembali ke halaman sebelumnya, atau ke
error-start-page = halaman awal

## Impor
import-title = Impor
import-nothing = Tidak ada yang diimpor
import-imported-as = { $file } diimpor sebagai { $source }
import-rows-read = baris dibaca
import-alerts = peringatan diimpor
import-duplicates = duplikat dibuang
import-skipped = baris tidak sah dilewati
import-events-created = kejadian dibuat
import-events-grown = kejadian diperluas
import-events-merged = kejadian digabung
import-skipped-rows = Baris yang dilewati
import-warnings = Peringatan
import-see-events = Lihat kejadian
import-zones-done = Zona diimpor
import-zones-summary = Zona: { $zones }. Kejadian yang dikaitkan lagi ke zonanya: { $relinked }.
import-alert-file = Berkas peringatan
import-alert-hint = CSV (baris judul, koma atau titik koma) atau titik GeoJSON. Paling banyak { $limit }. Berkas yang berisi kesalahan apa pun tidak mengimpor apa-apa, kecuali Anda melewati baris yang tidak sah.
import-no-source = Belum ada sumber peringatan yang terdaftar. Daftarkan satu dulu:
import-registered = Terdaftar: { $sizes }.
import-source = Sumber
import-choose = pilih…
import-format = Format
import-format-auto = kenali dari berkasnya
import-threshold = Ambang keyakinan
import-threshold-hint = (hanya keyakinan berupa angka)
import-file = Berkas
import-skip-invalid = Lewati baris tidak sah (impor yang sah dan daftar sisanya)
import-alerts-button = Impor peringatan
import-zone-file = Berkas zona
import-zone-hint = FeatureCollection GeoJSON berisi fitur Polygon atau MultiPolygon dengan teks "name" dan, bila perlu, boolean "priority". Zona dengan nama yang sudah tersimpan diganti. Paling banyak { $limit }.
import-zones-button = Impor zona

## Memasangkan ponsel
pair-page-title = Pasangkan ponsel
pair-page-bundle = Paket { $id } untuk { $team }, batas { $due }.
pair-another = Kode lain
pair-back = Kembali ke perjalanan
pair-back-trip = Kembali ke perjalanan ini
pairing-title = Pasang perjalanan ini di ponsel
pairing-qr-label = Kode QR yang membuka aplikasi lapangan dengan perjalanan ini
pairing-scan = Di ponsel tim, pindai kode dengan kamera, atau buka aplikasi lapangan lalu ketik kode ini:
pairing-open-app = Buka aplikasi lapangan
pairing-once = Kode ini berlaku sekali, untuk satu ponsel, sampai { $expires }. Buat kode lain untuk setiap ponsel. Ponsel itu lalu berisi lokasi kegiatan yang mungkin ilegal: perlakukan sebagai rahasia.

# --- trips, trip, preview, events, event ---
## Words shared by these pages: trip states, event statuses, modes, alert confidence
trip-state-issued = diterbitkan
trip-state-overdue = terlambat
trip-state-partly-returned = sebagian kembali
trip-state-returned = kembali
trip-state-cancelled = dibatalkan
trip-state-expired = kedaluwarsa
status-unvisited = belum dikunjungi
status-not-reached = tidak tercapai
status-confirmed = pembukaan lahan terbukti
status-false-alarm = peringatan palsu
status-inconclusive = tidak bisa dipastikan
status-disputed = dipersoalkan
mode-response = tanggapan
mode-assessment = penilaian
confidence-low = rendah
confidence-high = tinggi
## Trips list and the issue form
trips-title = Perjalanan
trips-nothing-changed = Tidak ada yang diubah
trips-cancelled = Paket { $id } dibatalkan; mulai sekarang kiriman yang ditandatangani dengan kunci unggahnya ditolak.
trips-issue-title = Terbitkan paket
trips-issue-hint = Mode tanggapan mengambil kejadian yang paling penting sekarang; mode penilaian mengundi sampel acak berstrata sebesar batas galat (dengan benih, dicatat). “Pratinjau” menampilkan kejadian terpilih, rute dan panjangnya sebelum apa pun diterbitkan; di sana Anda bisa menghapus centang kejadian, menambah yang lain dengan kodenya dan memindahkan titik awal. Paket berisi lokasi kegiatan yang mungkin ilegal: perlakukan sebagai rahasia.
trips-team = Tim
trips-choose = pilih…
trips-mode = Mode
trips-zone = Zona
trips-any-zone = zona mana saja
trips-from = Terdeteksi sejak
trips-to = Terdeteksi sampai
trips-source = Sumber
trips-any-source = sumber mana saja
trips-confidence = Keyakinan peringatan tertinggi
trips-any = apa saja
trips-min-area = Luas minimum (ha)
trips-max = Kejadian paling banyak
trips-margin = Batas galat
trips-assessment-hint = (penilaian)
trips-controls = Titik kontrol
trips-seed = Benih
trips-seed-hint = (kosong: acak, dicatat)
trips-start-lat = Lintang titik awal
trips-start-lon = Bujur titik awal
trips-start-name = Nama titik awal
trips-start-placeholder = awal
trips-walking = Kecepatan jalan kaki (km/jam)
trips-due = Batas waktu (hari)
trips-expires = Kedaluwarsa setelah (hari)
trips-status-legend = Hanya kejadian yang statusnya
trips-status-hint = (tidak ada yang dicentang: status apa saja)
trips-extent = Wilayah kerja
trips-extent-hint = (opsional: Polygon atau MultiPolygon GeoJSON, atau Feature yang memuatnya, sampai 64 KiB; tempel atau pilih berkasnya)
trips-extent-file = Berkas wilayah
trips-preview = Pratinjau
trips-issue-now = Terbitkan tanpa pratinjau
trips-filter = Saring perjalanan
trips-state = Keadaan
trips-any-state = keadaan apa saja
trips-every-team = semua tim
trips-show = Tampilkan
trips-none = Belum ada paket yang diterbitkan.
trips-none-match = Tidak ada perjalanan yang cocok dengan saringan ini ({ $all } seluruhnya).
trips-count = { $shown } dari { $all } perjalanan.
trips-states-explained = Terlambat: lewat batas waktu tanpa kiriman; kedaluwarsa: lewat masa berlaku tanpa kiriman; kembali: setiap titik punya laporan.
trips-col-trip = Perjalanan
trips-col-issued = Diterbitkan
trips-col-due = Batas
trips-col-events = Kejadian
trips-col-controls = Kontrol
trips-col-route = Rute (km)
trips-col-reports = Laporan
trips-col-actions = Tindakan
trips-returns = ({ $n } kiriman)
trips-open = Buka
trips-open-label = Buka perjalanan { $id }
trips-download = Unduh
trips-pair = Pasangkan ponsel
trips-pair-label = Pasangkan ponsel dengan paket { $id }
trips-cancel = Batalkan
trips-cancel-label = Batalkan paket { $id }
